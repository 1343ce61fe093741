package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/reference"
)

func TestInspect(t *testing.T) {
	dir, sheet := calCase(t)
	refs := filepath.Join(dir, "refs.json")
	if _, e, code := run(t, "calibrate", sheet, "-o", refs); code != exitOK {
		t.Fatalf("calibrate: exit %d: %s", code, e)
	}
	raw, err := os.ReadFile(refs)
	if err != nil {
		t.Fatal(err)
	}

	// A section added to inspectSections is printed after the summary.
	saved := inspectSections
	t.Cleanup(func() { inspectSections = saved })
	inspectSections = append(inspectSections, func(w io.Writer, set *reference.Set, path string) error {
		_, err := fmt.Fprintf(w, "extra section: %d compounds in %s\n", len(set.Compounds), filepath.Base(path))
		return err
	})
	out, _, code := run(t, "inspect", refs)
	if code != exitOK || !strings.Contains(out, "extra section: 2 compounds in refs.json") || strings.Index(out, "extra") < strings.Index(out, "yellow") {
		t.Errorf("inspect with a section: exit %d\n%s", code, out)
	}
	inspectSections = saved

	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct {
		name, path, says string
	}{
		{"missing", filepath.Join(dir, "none.json"), "none.json"},
		{"edited", write("edited.json", bytes.Replace(raw, []byte(`"path_cm": 1`), []byte(`"path_cm": 1.5`), 1)), "checksum"},
		{"truncated", write("cut.json", raw[:len(raw)*2/3]), "ends early"},
		{"newer", write("new.json", bytes.Replace(raw, []byte(`"schema": 3`), []byte(`"schema": 7`), 1)), "newer"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errOut, code := run(t, "inspect", c.path)
			if code != exitFailure || out != "" || !strings.Contains(errOut, c.says) || !strings.Contains(errOut, filepath.Base(c.path)) {
				t.Errorf("inspect %s: exit %d, stdout %q, stderr %q; want exit 1 naming the file and saying %q", c.name, code, out, errOut, c.says)
			}
		})
	}
	if _, _, code := run(t, "inspect"); code != exitUsage {
		t.Errorf("inspect without a file: exit %d, want %d", code, exitUsage)
	}
}

// inspect shows the figures of merit after the summary.
func TestInspectShowsMerits(t *testing.T) {
	_, refs, _ := valCase(t, 1)
	out, errOut, code := run(t, "inspect", refs)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	low := strings.ToLower(out)
	for _, want := range []string{"figures of merit (net analyte signal) over 400-700 nm", "selectivity", "lod", "loq", "baseline offset"} {
		if !strings.Contains(low, want) {
			t.Errorf("inspect output lacks %q:\n%s", want, out)
		}
	}
}
