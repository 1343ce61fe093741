package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
)

// nonFinite matches how Go, C and spreadsheets spell a NaN or an
// infinity in text.
var nonFinite = regexp.MustCompile(`(?i)(^|[^a-z])(nan|[+-]?inf(inity)?|1\.#(inf|ind|qnan))([^a-z]|$)`)

// checkFinite fails when out spells a NaN or an infinity.
func checkFinite(t *testing.T, what, out string) {
	t.Helper()
	for i, l := range strings.Split(out, "\n") {
		if nonFinite.MatchString(l) {
			t.Errorf("%s, line %d, holds a non-finite number: %s", what, i+1, l)
		}
	}
}

// TestNonFiniteNeverPrinted runs every command that writes results on
// degenerate but legal input and checks that no table, CSV or JSON
// output spells NaN or Inf:
//   - standards without noise (the calibration fits exactly: zero
//     residual, so lack-of-fit and curvature tests divide 0 by 0);
//   - a reference set of two compounds whose bands lie 1 nm apart (an
//     ill-conditioned design: solve and verify must say so in the row);
//   - samples that are exactly a mixture, exactly zero and exactly
//     constant (zero residual, zero total variation);
//   - a check standard declared at a concentration near the smallest
//     float64 (a recovery that would overflow).
func TestNonFiniteNeverPrinted(t *testing.T) {
	dir := t.TempDir()
	var wl []float64
	for w := 400.0; w <= 600; w += 2 {
		wl = append(wl, w)
	}
	band := func(centre float64) []float64 {
		v := make([]float64, len(wl))
		for i, w := range wl {
			d := (w - centre) / 25
			v[i] = 0.05 * math.Exp(-d*d/2)
		}
		return v
	}
	write := func(name string, v []float64) {
		t.Helper()
		writeScans(t, filepath.Join(dir, name), &spectrum.Spectrum{Name: strings.TrimSuffix(name, ".csv"), Wavelengths: wl, Values: v, Quantity: spectrum.Absorbance})
	}
	mix := func(c0, c1 float64, k0, k1 []float64) []float64 {
		v := make([]float64, len(wl))
		for i := range v {
			v[i] = c0*k0[i] + c1*k1[i]
		}
		return v
	}
	// Exact standards of two well separated dyes.
	a, b := band(460), band(540)
	sheet := "scan,amber (mg/L),blue (mg/L)\nblank.csv,0,0\n"
	write("blank.csv", make([]float64, len(wl)))
	for _, lv := range []float64{2, 4, 6, 8, 10} {
		write(fmt.Sprintf("a%g.csv", lv), mix(lv, 0, a, b))
		write(fmt.Sprintf("b%g.csv", lv), mix(0, lv, a, b))
		sheet += fmt.Sprintf("a%g.csv,%g,0\nb%g.csv,0,%g\n", lv, lv, lv, lv)
	}
	stdPath := filepath.Join(dir, "standards.csv")
	if err := os.WriteFile(stdPath, []byte(sheet), 0o644); err != nil {
		t.Fatal(err)
	}
	exact := filepath.Join(dir, "exact.json")
	out, errOut, code := run(t, "calibrate", stdPath, "-o", exact)
	if code != exitOK && code != exitFlagged {
		t.Fatalf("calibrate exact standards: exit %d\n%s", code, errOut)
	}
	checkFinite(t, "calibrate summary", out)
	raw, err := os.ReadFile(exact)
	if err != nil {
		t.Fatal(err)
	}
	checkFinite(t, "reference set file", string(raw))
	out, _, _ = run(t, "inspect", exact)
	checkFinite(t, "inspect", out)

	// Two compounds 1 nm apart, with a little noise in the model.
	set, err := reference.Load(exact)
	if err != nil {
		t.Fatal(err)
	}
	near := band(461)
	for i := range set.Grid {
		set.Compounds[1].Absorptivity[i] = near[i]
		set.Noise[i] = 0.001
	}
	set.Provenance.Notes = append(set.Provenance.Notes, "hand-made: blue moved next to amber for a test")
	twin := filepath.Join(dir, "twin.json")
	if err := set.Save(twin); err != nil {
		t.Fatal(err)
	}

	// Samples.
	write("s-exact.csv", mix(3, 7, a, b))
	write("s-zero.csv", make([]float64, len(wl)))
	flat := make([]float64, len(wl))
	for i := range flat {
		flat[i] = 0.05
	}
	write("s-flat.csv", flat)
	write("s-twin.csv", mix(3, 7, a, near))
	samples := []string{filepath.Join(dir, "s-exact.csv"), filepath.Join(dir, "s-zero.csv"), filepath.Join(dir, "s-flat.csv"), filepath.Join(dir, "s-twin.csv")}
	for _, ref := range []string{exact, twin} {
		for _, opts := range [][]string{nil, {"--weighted", "--baseline", "linear+scatter"}, {"--shift", "--baseline", "none"}} {
			for _, format := range []string{"table", "csv", "json"} {
				args := append(append([]string{"solve", ref}, samples...), "--format", format)
				args = append(args, opts...)
				out, errOut, code := run(t, args...)
				what := fmt.Sprintf("solve %s %v --format %s", filepath.Base(ref), opts, format)
				if code == exitFailure || code == exitUsage {
					t.Fatalf("%s: exit %d\n%s", what, code, errOut)
				}
				checkFinite(t, what, out)
				if ref == twin && format == "csv" && opts == nil {
					for _, row := range strings.Split(strings.TrimSpace(dataLines(out)), "\n")[1:] {
						if !strings.Contains(row, "illcond") {
							t.Errorf("%s: a row of the ill-conditioned design does not say so: %s", what, row)
						}
					}
				}
			}
		}
		for _, format := range []string{"table", "csv", "json"} {
			out, errOut, code := run(t, "window", ref, "--format", format, "--step", "20", "--min-width", "20")
			if code == exitUsage {
				t.Fatalf("window: exit %d\n%s", code, errOut)
			}
			checkFinite(t, "window "+filepath.Base(ref)+" "+format, out)
		}
	}

	// Check standards: exact, and one declared near the smallest float64.
	write("c1.csv", mix(5, 5, a, b))
	write("c2.csv", mix(5, 5, a, b))
	write("c3.csv", mix(0.01, 4, a, b))
	checks := filepath.Join(dir, "checks.csv")
	if err := os.WriteFile(checks, []byte("scan,amber (mg/L),blue (mg/L)\nc1.csv,5,5\nc2.csv,5,5\nc3.csv,0.01,4\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, format := range []string{"table", "csv", "json"} {
		out, errOut, code := run(t, "verify", exact, checks, "--format", format, "--crossval", stdPath, "--crossval-by", "standard")
		if code != exitOK && code != exitFlagged {
			t.Fatalf("verify: exit %d\n%s", code, errOut)
		}
		checkFinite(t, "verify "+format, out)
	}
	// Against the ill-conditioned set, each check row says so.
	out, errOut, code = run(t, "verify", twin, checks, "--format", "csv")
	if code == exitUsage || code == exitFailure {
		t.Fatalf("verify twin: exit %d\n%s", code, errOut)
	}
	checkFinite(t, "verify twin csv", out)
	rows := 0
	for _, row := range strings.Split(strings.TrimSpace(out), "\n")[1:] {
		if !strings.HasPrefix(row, "check,") {
			continue
		}
		rows++
		if !strings.HasSuffix(row, "illcond") && !strings.Contains(row, "illcond ") {
			t.Errorf("verify twin: a check row of the ill-conditioned design does not say so: %s", row)
		}
	}
	if rows != 6 {
		t.Errorf("verify twin: %d check rows, want 6:\n%s", rows, out)
	}
	tiny := filepath.Join(dir, "tiny.csv")
	if err := os.WriteFile(tiny, []byte("scan,amber (mg/L),blue (mg/L)\nc1.csv,5,5\nc3.csv,5e-324,4\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errOut, code = run(t, "verify", exact, tiny, "--format", "json")
	if code != exitFailure || out != "" || !strings.Contains(errOut, "check c3: known amber 5e-324 is too small for a recovery") {
		t.Errorf("known 5e-324: exit %d, stdout %q, stderr:\n%s", code, out, errOut)
	}
}
