package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSchema1SetGolden: a reference set written before sets recorded a
// measured noise model (schema 1, made by calibrate from the invented
// demo's standards; testdata/schema1 holds it with the demo's blank and
// four of its samples, one of them too concentrated) loads and solves
// exactly as it did then, unweighted and weighted: such a set keeps the
// fixed noise growth (10^(A-1) above A = 1). The golden files were made
// by the build before the measured model existed (regenerated only for
// the result files' schema line since). Nor does it record the
// absorptivities' covariance: its numbers are as before, and solve says
// once that the calibration's part is not propagated.
func TestSchema1SetGolden(t *testing.T) {
	dir, err := filepath.Abs(filepath.Join("testdata", "schema1"))
	if err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	for _, c := range []struct {
		golden string
		extra  []string
	}{
		{"results_golden.csv", nil},
		{"results_weighted_golden.csv", []string{"--weighted"}},
	} {
		out := filepath.Join(t.TempDir(), "results.csv")
		args := append([]string{"solve", "refs.json", "lot-101.csv", "lot-103.csv", "lot-106.csv", "lot-107.csv",
			"--blank", "blank.csv", "--format", "csv", "-o", out}, c.extra...)
		_, errOut, code := run(t, args...)
		if code != exitOK && code != exitFlagged {
			t.Fatalf("%s: exit code %d; stderr:\n%s", c.golden, code, errOut)
		}
		got, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		// Its results leave the calibration's propagated part out, said
		// once per run, not per sample.
		if n := strings.Count(errOut, "calibrate again to have it propagated"); n != 1 {
			t.Errorf("%s: the note on the calibration's uncertainty given %d times, want once; stderr:\n%s", c.golden, n, errOut)
		}
		if strings.Contains(string(got), "se_calibration") {
			t.Errorf("%s: se_calibration for a set without the covariance", c.golden)
		}
		got = []byte(maskCommand(maskTime(string(got))))
		if strings.Contains(string(got), "noise model") {
			t.Errorf("%s: a schema 1 set reports a measured noise model", c.golden)
		}
		checkGolden(t, dir, c.golden, got)
	}
}
