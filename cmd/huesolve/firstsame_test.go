package main

import (
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// TestFirstSameManyInputs: among 1,200 inputs (stat'ed in blocks on all
// cores) the first that is the output file is found, also when a later
// one is a link to it too, and none when no input is.
func TestFirstSameManyInputs(t *testing.T) {
	dir := t.TempDir()
	var inputs []string
	for i := range 1200 {
		p := filepath.Join(dir, "s"+strconv.Itoa(i)+".csv")
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
		inputs = append(inputs, p)
	}
	out := inputs[1100]
	if err := os.Remove(inputs[700]); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(out, inputs[700]); err != nil {
		t.Fatal(err)
	}
	oi, err := os.Stat(out)
	if err != nil {
		t.Fatal(err)
	}
	if k := firstSame(oi, inputs); k != 700 {
		t.Errorf("first input that is the output: %d, want 700", k)
	}
	if k := firstSame(oi, append(inputs[:700:700], inputs[701:1100]...)); k != -1 {
		t.Errorf("found %d among inputs that are not the output", k)
	}
	err = checkNotInput("-o", out, inputs...)
	if err == nil || err.Error() != "-o "+out+" is the input file "+inputs[700]+": write the output to another file" {
		t.Errorf("checkNotInput: %v", err)
	}
}
