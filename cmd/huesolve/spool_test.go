package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSpool: what is written comes back whole, from a temporary file
// beside the output that leaves nothing behind, or from memory when no
// file can be made there.
func TestSpool(t *testing.T) {
	dir := t.TempDir()
	for _, out := range []string{filepath.Join(dir, "r.csv"), filepath.Join(dir, "missing", "r.csv")} {
		s := newSpool(out)
		want := strings.Repeat("row,1,2\n", 20000)
		if _, err := s.Write([]byte(want)); err != nil {
			t.Fatal(err)
		}
		var got bytes.Buffer
		if err := s.copyTo(&got); err != nil {
			t.Fatal(err)
		}
		s.close()
		if got.String() != want {
			t.Errorf("%s: %d bytes back, want %d", out, got.Len(), len(want))
		}
		if inFile := s.f != nil; inFile != !strings.Contains(out, "missing") {
			t.Errorf("%s: spooled to a file: %v", out, inFile)
		}
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("left behind: %v", ents)
	}
}
