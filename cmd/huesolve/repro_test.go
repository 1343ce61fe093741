package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCalibrateSourceDateEpoch: with SOURCE_DATE_EPOCH set, two
// calibrations of the same standards give byte-identical reference sets
// (and summaries) whose creation time is the one given; a malformed value
// is refused.
func TestCalibrateSourceDateEpoch(t *testing.T) {
	dir, sheet := calCase(t)
	// 1700000000 s after the epoch is 2023-11-14T22:13:20Z (date -u -d @1700000000).
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	var sets, outs [2][]byte
	for i := range 2 {
		p := filepath.Join(dir, []string{"a.json", "b.json"}[i])
		out, errOut, code := run(t, "calibrate", sheet, "-o", p)
		if code != exitOK && code != exitFlagged {
			t.Fatalf("calibrate: exit %d\n%s", code, errOut)
		}
		raw, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		sets[i], outs[i] = raw, []byte(out)
	}
	if !bytes.Equal(sets[0], sets[1]) {
		t.Error("two calibrations with SOURCE_DATE_EPOCH give different reference sets")
	}
	if !bytes.Equal(outs[0], outs[1]) {
		t.Error("two calibrations with SOURCE_DATE_EPOCH print different summaries")
	}
	if !bytes.Contains(sets[0], []byte(`"created": "2023-11-14T22:13:20Z"`)) {
		t.Errorf("creation time is not SOURCE_DATE_EPOCH's:\n%s", grepLine(sets[0], "created"))
	}
	for _, bad := range []string{"yesterday", "-5", "1.5e9"} {
		t.Setenv("SOURCE_DATE_EPOCH", bad)
		p := filepath.Join(dir, "bad.json")
		_, errOut, code := run(t, "calibrate", sheet, "-o", p)
		if code != exitFailure || !strings.Contains(errOut, "SOURCE_DATE_EPOCH") {
			t.Errorf("SOURCE_DATE_EPOCH=%s: exit %d\n%s", bad, code, errOut)
		}
		if _, err := os.Stat(p); !os.IsNotExist(err) {
			t.Errorf("SOURCE_DATE_EPOCH=%s: a set was written", bad)
		}
	}
}

func grepLine(b []byte, word string) string {
	for _, l := range strings.Split(string(b), "\n") {
		if strings.Contains(l, word) {
			return l
		}
	}
	return ""
}

// TestValidationOutputsReproducible: verify (with cross-validation) and
// window give byte-identical CSV and JSON files on every run.
func TestValidationOutputsReproducible(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	std := filepath.Join(dir, "standards.csv")
	for _, c := range []struct {
		name string
		args []string
	}{
		{"verify", []string{"verify", refs, checks, "--crossval", std, "--shift"}},
		{"window", []string{"window", refs, "--step", "20", "--weighted"}},
	} {
		for _, format := range []string{"csv", "json"} {
			var got [2][]byte
			for i := range 2 {
				p := filepath.Join(dir, c.name+"-"+format+"-"+string(rune('a'+i)))
				args := append(append([]string(nil), c.args...), "--format", format, "-o", p)
				if _, errOut, code := run(t, args...); code != exitOK && code != exitFlagged {
					t.Fatalf("%s %s: exit %d\n%s", c.name, format, code, errOut)
				}
				raw, err := os.ReadFile(p)
				if err != nil {
					t.Fatal(err)
				}
				if len(raw) < 100 {
					t.Fatalf("%s %s: output of %d bytes", c.name, format, len(raw))
				}
				got[i] = []byte(maskCommand(maskTime(string(raw)))) // each run names its own -o; TestRunsDifferOnlyInTime checks the record
			}
			if !bytes.Equal(got[0], got[1]) {
				t.Errorf("%s --format %s differs between two runs", c.name, format)
			}
		}
	}
}
