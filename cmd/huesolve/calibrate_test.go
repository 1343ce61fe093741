package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
)

// calBand is an invented Gaussian band.
func calBand(wl []float64, centre, width, height float64) []float64 {
	v := make([]float64, len(wl))
	for i, w := range wl {
		d := (w - centre) / width
		v[i] = height * math.Exp(-d*d/2)
	}
	return v
}

func calGrid(lo, step float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo + step*float64(i)
	}
	return g
}

// calWrite writes spectra with the spectrum package's writers: JCAMP-DX
// for a .jdx name, delimited text otherwise.
func calWrite(t *testing.T, path string, ss ...*spectrum.Spectrum) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if strings.HasSuffix(path, ".jdx") {
		err = spectrum.WriteJCAMP(f, ss[0], spectrum.JCAMPOptions{Origin: "invented test data", Owner: "public domain"})
	} else {
		err = spectrum.WriteDelimited(f, ss, spectrum.WriteOptions{Comments: []string{"invented test data"}})
	}
	if err != nil {
		t.Fatal(err)
	}
}

// calTruth is the invented absorptivity of the two test dyes (per mg/L per cm).
func calTruth(wl []float64) [2][]float64 {
	return [2][]float64{calBand(wl, 470, 25, 0.040), calBand(wl, 540, 30, 0.030)}
}

// calCase writes a standards folder: two blanks, five pure levels of each
// dye, three mixtures in one wide table; one standard as JCAMP-DX, one in
// %T, one on a coarser grid. Absorbances are 0.02 (solvent and cell) plus
// the dyes plus noise of SD 0.0005.
func calCase(t *testing.T) (dir, sheet string) {
	t.Helper()
	dir = t.TempDir()
	wl := calGrid(400, 1, 301)
	coarse := calGrid(396, 2, 155)
	rng := rand.New(rand.NewPCG(7, 9))
	scan := func(grid []float64, red, yellow float64) []float64 {
		k := calTruth(grid)
		v := make([]float64, len(grid))
		for i := range v {
			v[i] = 0.02 + red*k[0][i] + yellow*k[1][i] + 0.0005*rng.NormFloat64()
		}
		return v
	}
	sp := func(name string, grid, v []float64) *spectrum.Spectrum {
		return &spectrum.Spectrum{Name: name, Wavelengths: grid, Values: v, Quantity: spectrum.Absorbance}
	}
	lines := []string{"# invented standards for the calibrate test", "scan,column,red (mg/L),yellow (mg/L)"}
	calWrite(t, filepath.Join(dir, "blank-1.csv"), sp("blank 1", wl, scan(wl, 0, 0)))
	calWrite(t, filepath.Join(dir, "blank-2.csv"), sp("blank 2", wl, scan(wl, 0, 0)))
	lines = append(lines, "blank-1.csv,,0,0", "blank-2.csv,,0,0")
	for _, c := range []float64{2, 4, 6, 8, 10} {
		for d, name := range []string{"red", "yellow"} {
			red, yellow := c, 0.0
			if d == 1 {
				red, yellow = 0, c
			}
			file := fmt.Sprintf("%s-%g.csv", name, c)
			s := sp(file, wl, scan(wl, red, yellow))
			switch {
			case d == 0 && c == 4:
				file = "red-4.jdx"
			case d == 0 && c == 8:
				// Percent transmittance, %T = 100 * 10^-A.
				for i, a := range s.Values {
					s.Values[i] = 100 * math.Pow(10, -a)
				}
				s.Quantity = spectrum.PercentT
			case d == 1 && c == 6:
				s = sp(file, coarse, scan(coarse, red, yellow))
			}
			calWrite(t, filepath.Join(dir, file), s)
			lines = append(lines, fmt.Sprintf("%s,,%g,%g", file, red, yellow))
		}
	}
	mixes := [][2]float64{{3, 7}, {5, 5}, {9, 2}}
	var ms []*spectrum.Spectrum
	for i, m := range mixes {
		name := fmt.Sprintf("mix-%d", i+1)
		ms = append(ms, sp(name, wl, scan(wl, m[0], m[1])))
		lines = append(lines, fmt.Sprintf("mixes.csv,%s,%g,%g", name, m[0], m[1]))
	}
	calWrite(t, filepath.Join(dir, "mixes.csv"), ms...)
	sheet = filepath.Join(dir, "standards.csv")
	if err := os.WriteFile(sheet, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir, sheet
}

func TestCalibrateEndToEnd(t *testing.T) {
	dir, sheet := calCase(t)
	refs := filepath.Join(dir, "refs.json")
	plots := filepath.Join(dir, "plots")
	out, errOut, code := run(t, "calibrate", sheet, "-o", refs, "--plots", plots, "--plot-format", "svg")
	if code != exitOK {
		t.Fatalf("calibrate: exit %d\nstdout:\n%s\nstderr:\n%s", code, out, errOut)
	}
	for _, want := range []string{"red", "yellow", "470", "540", "2-10 mg/L", "ceiling A = 2", "with intercept"} {
		if !strings.Contains(out, want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	// The coarse-grid standard was interpolated, and the command said so.
	if !strings.Contains(errOut, "interpolated") {
		t.Errorf("stderr does not report the grid change:\n%s", errOut)
	}
	set, err := reference.Load(refs)
	if err != nil {
		t.Fatal(err)
	}
	truth := calTruth(set.Grid)
	for q, c := range set.Compounds {
		for j := range set.Grid {
			// Within 5 SE plus a little for the interpolated standard.
			if d := math.Abs(c.Absorptivity[j] - truth[q][j]); d > 5*c.SE[j]+1e-5 {
				t.Fatalf("%s at %g nm: %g +- %g, want %g", c.Name, set.Grid[j], c.Absorptivity[j], c.SE[j], truth[q][j])
			}
		}
		if c.Unit != "mg/L" || len(c.Flags) != 0 {
			t.Errorf("%s: unit %q flags %v", c.Name, c.Unit, c.Flags)
		}
	}
	pv := set.Provenance
	if pv.Version != version || pv.Blank != "sheet rows" || len(pv.Standards) != 15 {
		t.Errorf("provenance: version %q blank %q, %d standards", pv.Version, pv.Blank, len(pv.Standards))
	}
	raw, _ := os.ReadFile(filepath.Join(dir, "red-4.jdx"))
	sum := sha256.Sum256(raw)
	found := false
	for _, s := range pv.Standards {
		if s.File == "red-4.jdx" {
			found = s.SHA256 == hex.EncodeToString(sum[:])
		}
	}
	if !found {
		t.Error("provenance lacks the SHA-256 of red-4.jdx")
	}
	for _, f := range []string{"absorptivity.svg", "line-red.svg", "line-yellow.svg"} {
		if _, err := os.Stat(filepath.Join(plots, f)); err != nil {
			t.Errorf("plot: %v", err)
		}
	}

	// inspect prints the same summary from the file (then its own
	// sections, such as figures of merit).
	out2, errOut2, code := run(t, "inspect", refs)
	if code != exitOK || !strings.HasPrefix(out2, out) {
		t.Errorf("inspect: exit %d, stderr %q; output does not start with calibrate's:\n%s\n---\n%s", code, errOut2, out2, out)
	}

	// Beer-Lambert, A = eps b c: the same scans declared at 2 cm give
	// absorptivities per cm exactly half.
	refs2 := filepath.Join(dir, "refs2.json")
	if _, e, code := run(t, "calibrate", sheet, "-o", refs2, "--path-cm", "2"); code != exitOK {
		t.Fatalf("calibrate --path-cm 2: exit %d: %s", code, e)
	}
	set2, err := reference.Load(refs2)
	if err != nil {
		t.Fatal(err)
	}
	for q := range set.Compounds {
		for j := range set.Grid {
			if set2.Compounds[q].Absorptivity[j] != set.Compounds[q].Absorptivity[j]/2 {
				t.Fatalf("2 cm: %g, 1 cm: %g; want exactly half", set2.Compounds[q].Absorptivity[j], set.Compounds[q].Absorptivity[j])
			}
		}
	}

	// A set from calibrate records the absorptivities' covariance: solve
	// reports the calibration's part beside each SE, without the note for
	// older sets, and the same whether the standards were declared at 1
	// or 2 cm (the covariance scales with the absorptivities).
	var seCal [2][]float64
	for i, r := range []string{refs, refs2} {
		js, e, code := run(t, "solve", r, filepath.Join(dir, "red-4.jdx"), "--format", "json", "-o", "-")
		if code != exitOK && code != exitFlagged {
			t.Fatalf("solve with %s: exit %d: %s", r, code, e)
		}
		if strings.Contains(e, "calibrate again") {
			t.Errorf("solve with a new set gives the note for older sets: %s", e)
		}
		var doc struct {
			Samples []struct {
				Amounts []struct {
					SE    float64  `json:"se"`
					SECal *float64 `json:"se_calibration"`
				}
			}
		}
		if err := json.Unmarshal([]byte(js), &doc); err != nil || len(doc.Samples) != 1 {
			t.Fatalf("solve JSON: %v\n%s", err, js)
		}
		for _, a := range doc.Samples[0].Amounts {
			if a.SECal == nil || !(*a.SECal >= 0) || *a.SECal > a.SE {
				t.Fatalf("se_calibration %v with se %g:\n%s", a.SECal, a.SE, js)
			}
			seCal[i] = append(seCal[i], *a.SECal)
		}
	}
	for k := range seCal[0] {
		if math.Abs(seCal[0][k]-seCal[1][k]) > 1e-9*seCal[0][k] {
			t.Errorf("compound %d: se_calibration %g at 1 cm, %g at 2 cm", k, seCal[0][k], seCal[1][k])
		}
	}
	if !(seCal[0][0] > 0) {
		t.Errorf("red in a red standard: se_calibration %g, want above 0", seCal[0][0])
	}

	// A separate blank, a window and a through-origin fit.
	refs3 := filepath.Join(dir, "refs3.json")
	if _, e, code := run(t, "calibrate", sheet, "-o", refs3, "--blank", filepath.Join(dir, "blank-1.csv"),
		"--window", "420-600", "--through-origin"); code != exitOK {
		t.Fatalf("calibrate --blank --window --through-origin: exit %d: %s", code, e)
	}
	set3, err := reference.Load(refs3)
	if err != nil {
		t.Fatal(err)
	}
	if set3.Grid[0] != 420 || set3.Grid[len(set3.Grid)-1] != 600 || set3.Intercept || set3.Provenance.Blank == "sheet rows" {
		t.Errorf("grid %g-%g, intercept %v, blank %q", set3.Grid[0], set3.Grid[len(set3.Grid)-1], set3.Intercept, set3.Provenance.Blank)
	}
}

func TestCalibrateErrors(t *testing.T) {
	dir, sheet := calCase(t)
	text, err := os.ReadFile(sheet)
	if err != nil {
		t.Fatal(err)
	}
	edit := func(name, old, new string) string {
		p := filepath.Join(dir, name)
		s := strings.Replace(string(text), old, new, 1)
		if s == string(text) {
			t.Fatalf("%s: edit %q did not apply", name, old)
		}
		if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	refs := filepath.Join(dir, "refs.json")
	cases := []struct {
		name string
		args []string
		code int
		says []string
	}{
		{"missing scan", []string{"calibrate", edit("s1.csv", "red-2.csv", "red-2b.csv"), "-o", refs}, exitFailure,
			[]string{"s1.csv:5:1", "red-2b.csv does not exist"}},
		{"negative", []string{"calibrate", edit("s2.csv", "yellow-4.csv,,0,4", "yellow-4.csv,,0,-4"), "-o", refs}, exitFailure,
			[]string{"s2.csv:8:4", "negative"}},
		{"unknown wide column", []string{"calibrate", edit("s3.csv", "mixes.csv,mix-2", "mixes.csv,mix-9"), "-o", refs}, exitFailure,
			[]string{"s3.csv:16:2", `no scan named "mix-9"`}},
		{"window outside", []string{"calibrate", sheet, "-o", refs, "--window", "350-600"}, exitFailure,
			[]string{"standards.csv:", "covers 400-700 nm"}},
		{"no output", []string{"calibrate", sheet}, exitUsage, []string{"--output"}},
		{"bad window", []string{"calibrate", sheet, "-o", refs, "--window", "700-400"}, exitUsage, []string{"--window"}},
		{"path too long", []string{"calibrate", sheet, "-o", refs, "--path-cm", "500"}, exitUsage, []string{"--path-cm 500", "0.0001 to 100 cm"}},
		{"path zero", []string{"calibrate", sheet, "-o", refs, "--path-cm", "0"}, exitUsage, []string{"--path-cm"}},
		{"bad pretreat", []string{"calibrate", sheet, "-o", refs, "--pretreat", "wobble:3"}, exitUsage, []string{"--pretreat"}},
		{"even sg window", []string{"calibrate", sheet, "-o", refs, "--pretreat", "sg:4,2"}, exitUsage, []string{`--pretreat: invalid pre-treatment "sg:4,2": window 4 must be odd`}},
		{"bad quantity", []string{"calibrate", sheet, "-o", refs, "--quantity", "lux"}, exitUsage, []string{"--quantity"}},
		{"bad plot format", []string{"calibrate", sheet, "-o", refs, "--plots", dir, "--plot-format", "gif"}, exitUsage, []string{"--plot-format"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, errOut, code := run(t, c.args...)
			if code != c.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, c.code, errOut)
			}
			for _, s := range c.says {
				if !strings.Contains(errOut, s) {
					t.Errorf("stderr %q does not say %q", errOut, s)
				}
			}
			if _, err := os.Stat(refs); err == nil {
				t.Errorf("a failed calibrate left %s", refs)
			}
		})
	}
}

// TestCalibrateWarnsCollinear: two invented dyes whose bands lie 2 nm
// apart give a reference set whose condition number (whole grid, offset
// baseline, as inspect shows it) above the illcond limit of 30: calibrate
// says so. The two well-separated dyes of calCase do not.
func TestCalibrateWarnsCollinear(t *testing.T) {
	dir := t.TempDir()
	wl := calGrid(400, 2, 151)
	rng := rand.New(rand.NewPCG(4, 4))
	ka, kb := calBand(wl, 470, 30, 0.04), calBand(wl, 472, 30, 0.04)
	lines := []string{"scan,column,near (mg/L),nearer (mg/L)"}
	for i, c := range [][2]float64{{0, 0}, {2, 0}, {4, 0}, {6, 0}, {8, 0}, {10, 0}, {0, 2}, {0, 4}, {0, 6}, {0, 8}, {0, 10}} {
		v := make([]float64, len(wl))
		for j := range v {
			v[j] = c[0]*ka[j] + c[1]*kb[j] + 0.0005*rng.NormFloat64()
		}
		file := fmt.Sprintf("s%d.csv", i)
		calWrite(t, filepath.Join(dir, file), &spectrum.Spectrum{Name: file, Wavelengths: wl, Values: v, Quantity: spectrum.Absorbance})
		lines = append(lines, fmt.Sprintf("%s,,%g,%g", file, c[0], c[1]))
	}
	sheet := filepath.Join(dir, "standards.csv")
	if err := os.WriteFile(sheet, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "calibrate", sheet, "-o", filepath.Join(dir, "refs.json"))
	if code == exitUsage || code == 1 || !strings.Contains(errOut, "huesolve: warning: the absorptivity spectra of the compounds are nearly collinear over 400-700 nm: condition number ") ||
		!strings.Contains(errOut, "above 30") {
		t.Errorf("exit %d, stderr %q: want a warning of nearly collinear spectra", code, errOut)
	}
	_, sheet = calCase(t)
	_, errOut, _ = run(t, "calibrate", sheet, "-o", filepath.Join(t.TempDir(), "refs.json"))
	if strings.Contains(errOut, "collinear") {
		t.Errorf("well-separated dyes: stderr %q", errOut)
	}
}

// TestCalWarnCollinearCannotCheck: when the collinearity check cannot be
// made (here a set with too few usable wavelengths for its columns),
// calibrate says so in a warning naming the cause, rather than keeping
// quiet as if the spectra had been found apart.
func TestCalWarnCollinearCannotCheck(t *testing.T) {
	g := []float64{400, 450, 500, 550, 600}
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: 1, Ceiling: 2, Noise: []float64{1e-3, 1e-3, 1e-3, 1e-3, 1e-3}}
	for k, name := range []string{"A", "B"} {
		c := reference.Compound{Name: name, Unit: "mg/L", Absorptivity: make([]float64, len(g)), SE: make([]float64, len(g)), Usable: make([]bool, len(g))}
		for i := range g {
			c.Absorptivity[i] = 0.01 * float64(1+(i+k)%3)
		}
		c.Usable[0], c.Usable[1] = true, true
		set.Compounds = append(set.Compounds, c)
	}
	if err := set.Validate(); err != nil {
		t.Fatal(err)
	}
	var got []string
	calWarnCollinear(set, func(msg string) { got = append(got, msg) })
	if len(got) != 1 || !strings.HasPrefix(got[0], "could not check whether the absorptivity spectra of the compounds are nearly collinear: too few usable wavelengths") {
		t.Errorf("warnings %q: want one saying the collinearity could not be checked and why", got)
	}
}
