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

// TestInspectNoisePlot: inspect --plots DIR writes the noise figure of a
// set with a measured noise model (SVG with its axis labels; PNG by
// default), and for a set without one writes nothing and says why.
func TestInspectNoisePlot(t *testing.T) {
	dir, sheet := calCase(t)
	refs := filepath.Join(dir, "refs.json")
	if _, e, code := run(t, "calibrate", sheet, "-o", refs); code != exitOK {
		t.Fatalf("calibrate: exit %d: %s", code, e)
	}
	plain := filepath.Join(dir, "plain")
	if _, e, code := run(t, "inspect", refs, "--plots", plain); code != exitOK || !strings.Contains(e, "no noise figure written") {
		t.Errorf("set without a noise model: exit %d, stderr %q", code, e)
	}
	if _, err := os.Stat(filepath.Join(plain, "noise-model.png")); err == nil {
		t.Error("a noise figure was written for a set without a noise model")
	}
	set, err := reference.Load(refs)
	if err != nil {
		t.Fatal(err)
	}
	set.NoiseModel = &reference.NoiseModel{KneeA: 1.3, KneeSE: 0.05, Readings: 200, MaxA: 1.9,
		Bins: []reference.NoiseBin{{LoA: 0, HiA: 1, MeanA: 0.5, Ratio: 1.01, N: 120}, {LoA: 1, HiA: 1.9, MeanA: 1.5, Ratio: 1.8, N: 80}}}
	noisy := filepath.Join(dir, "noisy.json")
	if err := set.Save(noisy); err != nil {
		t.Fatal(err)
	}
	for _, format := range []string{"svg", "png"} {
		plots := filepath.Join(dir, "plots-"+format)
		args := []string{"inspect", noisy, "--plots", plots}
		if format == "svg" {
			args = append(args, "--plot-format", "svg")
		}
		out, e, code := run(t, args...)
		if code != exitOK || !strings.Contains(e, "1 plots written") || !strings.Contains(out, "Noise growth") {
			t.Fatalf("inspect --plots (%s): exit %d, stderr %q", format, code, e)
		}
		b, err := os.ReadFile(filepath.Join(plots, "noise-model."+format))
		if err != nil || len(b) == 0 {
			t.Fatalf("noise figure (%s): %v, %d bytes", format, err, len(b))
		}
		if format != "svg" {
			continue
		}
		for _, want := range []string{"Absorbance (fitted)", "Residual SD / base noise", "knee A = 1.300"} {
			if !bytes.Contains(b, []byte(want)) {
				t.Errorf("SVG lacks %q", want)
			}
		}
	}
	if _, e, code := run(t, "inspect", noisy, "--plots", dir, "--plot-format", "gif"); code != exitUsage {
		t.Errorf("--plot-format gif: exit %d (%s), want %d", code, e, exitUsage)
	}
}
