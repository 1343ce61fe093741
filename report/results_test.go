package report

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"huesolve/provenance"
	"huesolve/unmix"
)

var testLayout = Layout{Compounds: []string{"amber", "teal"}, Units: []string{"mg/L", "mg/L"}, Baseline: []string{"offset"}, PathCM: 1}

// testResult is a hand-made result with an undefined Durbin-Watson
// statistic and awkward characters in its name.
func testResult(name string) *unmix.Result {
	r := &unmix.Result{
		Sample: name, Source: "runs/a.csv column 2",
		Amounts: []unmix.Amount{
			{Compound: "amber", Unit: "mg/L", Conc: 4.98820789, SE: 0.0073392, Lo: 4.97378, Hi: 5.00264, LOD: 0.0245, LOQ: 0.0743},
			{Compound: "teal", Unit: "mg/L", Conc: 0, SE: 0, Lo: 0, Hi: 0.0031, LOD: 0.0157, LOQ: 0.0475, Free: -0.0042, FreeSE: 0.0047,
				Flags: []unmix.Flag{unmix.FlagZero}},
		},
		Baseline: map[string]float64{"offset": 0.0101832},
		Flags:    []unmix.Flag{unmix.FlagSaturated, unmix.FlagDilute},
		RMS:      0.0019884, ChiSqRed: 0.96566, DW: math.NaN(), R2: 0.99988, Cond: 3.4799,
		Points: 380, Dropped: 21, Dilution: 10, PathCM: 1, SuggestDilution: 2.5, ShiftNM: -0,
	}
	return r
}

func TestNum(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want string
	}{
		{0, "0"}, {math.Copysign(0, -1), "0"}, {1.23456789, "1.23457"}, {-2e-7, "-2e-07"},
		{123456789, "1.23457e+08"}, {math.NaN(), "n/a"}, {math.Inf(-1), "n/a"},
	} {
		if got := num(c.v); got != c.want {
			t.Errorf("num(%g) = %q, want %q", c.v, got, c.want)
		}
	}
	for _, c := range []struct {
		c, se float64
		want  string
	}{
		{4.98820789, 0.0073392, "4.9882 ± 0.0073"}, {123.456, 12.3, "123 ± 12"}, {0, 0, "0"},
		{0.5, math.NaN(), "0.5"}, {math.Inf(1), 1, "n/a"},
	} {
		if got := ConcText(c.c, c.se); got != c.want {
			t.Errorf("ConcText(%g, %g) = %q, want %q", c.c, c.se, got, c.want)
		}
	}
}

func TestCSVWriter(t *testing.T) {
	var b bytes.Buffer
	w := NewCSVWriter(&b, testLayout)
	for _, n := range []string{"S1", `odd, "name"`} {
		if err := w.Write(testResult(n)); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Fail("x.csv", errors.New("bad")); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(b.String(), "NaN") || strings.Contains(b.String(), "Inf") {
		t.Errorf("non-finite number written:\n%s", b.String())
	}
	recs, err := commentedCSV(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 3 || recs[2][0] != `odd, "name"` {
		t.Fatalf("records %q", recs)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	for h, want := range map[string]string{
		"amber_conc": "4.98821", "amber_se": "0.0073392", "teal_flags": "zero", "durbin_watson": "n/a",
		"baseline_offset": "0.0101832", "flags": "sat dilute", "teal_unconstrained": "-0.0042", "amber_unconstrained": "", "suggest_dilution": "2.5", "points_dropped": "21", "shift_nm": "0",
	} {
		i, ok := col[h]
		if !ok || recs[1][i] != want {
			t.Errorf("column %s = %q, want %q", h, recs[1][i], want)
		}
	}
	// An empty run still has a header.
	b.Reset()
	if err := NewCSVWriter(&b, testLayout).Close(); err != nil || !strings.HasPrefix(b.String(), "# format: huesolve-results\n# schema: 3\nsample,source,amber_conc") {
		t.Errorf("empty CSV: %q, %v", b.String(), err)
	}
}

func TestJSONWriter(t *testing.T) {
	var b bytes.Buffer
	w := newJSONWriter(&b, testLayout)
	for _, n := range []string{"S1", "tab\there \"q\" <lod> \x01 \xff"} {
		if err := w.Write(testResult(n)); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Fail("bad.csv", errors.New(`bad.csv:3:2: "x" is not a number`)); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Format    string
		Compounds []struct{ Name, Unit string }
		Samples   []struct {
			Sample  string
			Amounts []map[string]any
			Flags   []string
			DW      *float64 `json:"durbin_watson"`
			NA      []string `json:"unavailable"`
		}
		Failed []struct{ Source, Error string }
	}
	if err := json.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, b.String())
	}
	if doc.Format != "huesolve-results" || len(doc.Samples) != 2 || len(doc.Failed) != 1 || doc.Compounds[1].Name != "teal" {
		t.Fatalf("document %+v", doc)
	}
	s := doc.Samples[1]
	if s.Sample != "tab\there \"q\" <lod> \x01 \ufffd" {
		t.Errorf("name round trip: %q", s.Sample)
	}
	if s.DW != nil || len(s.NA) != 1 || s.NA[0] != "durbin_watson" {
		t.Errorf("undefined DW: %v, unavailable %v", s.DW, s.NA)
	}
	if _, ok := s.Amounts[0]["unconstrained"]; ok {
		t.Error("unconstrained estimate given for a compound not held at zero")
	}
	if v := s.Amounts[1]["unconstrained"]; v != -0.0042 {
		t.Errorf("unconstrained estimate of the held compound = %v", v)
	}
	if !utf8.Valid(b.Bytes()) || strings.Contains(b.String(), "NaN") {
		t.Error("invalid UTF-8 or NaN in output")
	}
	// "flags" is always there, [] when empty; shift_se_nm only where a
	// shift was estimated.
	if f, ok := s.Amounts[0]["flags"].([]any); !ok || len(f) != 0 {
		t.Errorf("amount without flags: %v", s.Amounts[0]["flags"])
	}
	if strings.Contains(b.String(), "shift_se_nm") {
		t.Error("shift_se_nm written without a shift estimated")
	}
	r := testResult("S3")
	r.Flags, r.ShiftNM, r.ShiftSE = nil, 0.2, 0.05
	obj := string(newJSONWriter(&b, testLayout).AppendResult(nil, r))
	if !strings.Contains(obj, `"shift_nm": 0.2, "shift_se_nm": 0.05,`) || !strings.Contains(obj, `"suggest_dilution": 2.5, "flags": [], "unavailable"`) {
		t.Errorf("sample without flags, with a shift: %s", obj)
	}
	// se_calibration: only when the set records the calibration's part
	// (a set made before would show 0 for a part left out).
	if strings.Contains(obj, "se_calibration") {
		t.Errorf("se_calibration written for a set without it: %s", obj)
	}
	cl := testLayout
	cl.Calibration = true
	r.Amounts[0].SECal = 0.004
	obj = string(newJSONWriter(&b, cl).AppendResult(nil, r))
	if !strings.Contains(obj, `"se": 0.0073392, "se_calibration": 0.004, "ci95_lo"`) {
		t.Errorf("se_calibration not beside se: %s", obj)
	}
	// Empty run: still a complete document.
	b.Reset()
	if err := newJSONWriter(&b, testLayout).Close(); err != nil || !json.Valid(b.Bytes()) {
		t.Errorf("empty JSON %q, %v", b.String(), err)
	}
}

// TestTableFactorColumns: the table shows a dilution column when any
// sample's dilution is not 1, and a path column when any sample's path
// is not the reference set's, with every row's value; neither when all
// samples are undiluted at the reference path.
func TestTableFactorColumns(t *testing.T) {
	table := func(fs ...[2]float64) string {
		var b bytes.Buffer
		w := newTableWriter(&b, testLayout, 200)
		for i, f := range fs {
			r := testResult(fmt.Sprintf("S%d", i+1))
			r.Dilution, r.PathCM = f[0], f[1]
			if err := w.Write(r); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		return b.String()
	}
	if out := table([2]float64{1, 1}, [2]float64{1, 1}); strings.Contains(out, "Dilution") || strings.Contains(out, "Path (cm)") {
		t.Errorf("factor columns without a factor:\n%s", out)
	}
	out := table([2]float64{1, 1}, [2]float64{2, 1})
	if !strings.Contains(out, "Dilution") || strings.Contains(out, "Path (cm)") || !regexp.MustCompile(`S1 .*│ 1 +│ sat`).MatchString(out) ||
		!regexp.MustCompile(`S2 .*│ 2 +│ sat`).MatchString(out) {
		t.Errorf("one sample diluted:\n%s", out)
	}
	out = table([2]float64{1, 1}, [2]float64{1, 0.5})
	if strings.Contains(out, "Dilution") || !strings.Contains(out, "Path (cm)") || !regexp.MustCompile(`S2 .*│ 0.5 +│ sat`).MatchString(out) {
		t.Errorf("one sample in a shorter cell:\n%s", out)
	}
}

func TestTableWriter(t *testing.T) {
	for _, width := range []int{160, 80, 40} {
		var b bytes.Buffer
		w := newTableWriter(&b, testLayout, width)
		for _, n := range []string{"S1", "a-rather-long-sample-name-from-the-autosampler-017"} {
			// Undiluted, at the reference path: no factor columns here
			// (TestTableFactorColumns has them).
			r := testResult(n)
			r.Dilution = 1
			if err := w.Write(r); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Fail("x", errors.New("bad")); err != nil {
			t.Fatal(err)
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		out := b.String()
		lines := strings.Split(out, "\n")
		widest := 0
		for _, l := range lines {
			if strings.HasPrefix(l, "  ") { // legend
				continue
			}
			widest = max(widest, utf8.RuneCountInString(l))
		}
		if width >= 80 && widest > width {
			t.Errorf("width %d: table is %d wide:\n%s", width, widest, out)
		}
		for _, want := range []string{"4.9882 ± 0.0073", "0 zero", "amber (mg/L)", "dilute 2.5x", "zero ", "held at zero"} {
			if !strings.Contains(out, want) {
				t.Errorf("width %d: %q missing:\n%s", width, want, out)
			}
		}
		if strings.Contains(out, "could not be solved") {
			t.Errorf("width %d: failures belong on stderr, not in the table:\n%s", width, out)
		}
		head := lines[1] // the header row
		if width == 160 && !strings.Contains(head, "DW") {
			t.Errorf("width 160 dropped the DW column:\n%s", out)
		}
		if width == 80 && strings.Contains(head, "DW") {
			t.Errorf("width 80 kept the DW column:\n%s", out)
		}
		// Shortened tables say so, and how to see everything.
		note := "Cut for " + strconv.Itoa(width) + " columns (names, "
		if cutTable := width < 160; cutTable != strings.Contains(out, note) || cutTable != strings.Contains(out, "| cat or --format csv") {
			t.Errorf("width %d: the note on what was cut is wrong or missing:\n%s", width, out)
		}
	}
}

// TestTableFullWidth: a table for a file or a pipe (width 0) keeps long
// sample names whole and every column, however wide it gets, and says
// nothing about cuts.
func TestTableFullWidth(t *testing.T) {
	l := Layout{Units: []string{}}
	for k := range 6 {
		l.Compounds = append(l.Compounds, fmt.Sprintf("dye-with-a-long-name-%d", k))
		l.Units = append(l.Units, "mg/L")
	}
	var b bytes.Buffer
	w := newTableWriter(&b, l, 0)
	var names []string
	for i := 1; i <= 6; i++ {
		name := fmt.Sprintf("FH-2026-12-04-dyebath-v12-sample-%03d", i)
		names = append(names, name)
		r := testResult(name)
		r.Amounts = nil
		for _, c := range l.Compounds {
			r.Amounts = append(r.Amounts, unmix.Amount{Compound: c, Unit: "mg/L", Conc: 1.25, SE: 0.01})
		}
		if err := w.Write(r); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range append(names, "χ²/dof", "RMS", "DW", "0.97", "dye-with-a-long-name-5 (mg/L)") {
		if !strings.Contains(out, want) {
			t.Errorf("%q missing from the full-width table:\n%s", want, out)
		}
	}
	if strings.Contains(out, "…") || strings.Contains(out, "Cut for") {
		t.Errorf("full-width table cut something:\n%s", out)
	}
}

func TestSamplePlot(t *testing.T) {
	r := testResult("S/1 ok")
	if _, _, err := samplePlots(r, nil); !errors.Is(err, errNoCurves) {
		t.Errorf("no curves: %v", err)
	}
	n := 50
	r.Contributions = make([][]float64, 2)
	for i := range n {
		l := 450 + 2*float64(i)
		a := math.Exp(-0.5 * math.Pow((l-500)/20, 2))
		b := 0.5 * math.Exp(-0.5*math.Pow((l-530)/15, 2))
		e := 0.002 * math.Sin(float64(i))
		r.Grid = append(r.Grid, l)
		r.Contributions[0] = append(r.Contributions[0], a)
		r.Contributions[1] = append(r.Contributions[1], b)
		r.BaselineCurve = append(r.BaselineCurve, 0.01)
		r.Fitted = append(r.Fitted, a+b+0.01)
		r.Measured = append(r.Measured, a+b+0.01+e)
		r.Residual = append(r.Residual, e)
		r.Noise = append(r.Noise, 0.002)
	}
	dir := t.TempDir()
	for _, f := range []string{"png", "svg"} {
		path := SamplePlotPath(dir, 7, r.Sample, f)
		if filepath.Base(path) != "0007-S-1-ok."+f {
			t.Errorf("plot path %s", path)
		}
		if got := filepath.Base(SamplePlotPath(dir, 8, "FH-Lot A7", f)); got != "0008-FH-Lot-A7."+f {
			t.Errorf("plot file %s, want the sample's case kept: 0008-FH-Lot-A7.%s", got, f)
		}
		if err := SaveSamplePlot(r, testLayout.Compounds, path); err != nil {
			t.Fatal(err)
		}
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if f == "png" {
			img, err := png.Decode(bytes.NewReader(data))
			if err != nil {
				t.Fatal(err)
			}
			if b := img.Bounds(); b.Dx() < 400 || b.Dy() < 300 {
				t.Errorf("png %v", b)
			}
		} else {
			checkSampleSVG(t, path, r, 1)
		}
	}
	if err := SaveSamplePlot(r, nil, filepath.Join(dir, "x.gif")); err == nil {
		t.Error("gif accepted")
	}

	// Points 20-24 (490-498 nm) read above the ceiling: the figure shades
	// them and names them in the legend.
	cut := func(v []float64) []float64 { return append(append([]float64(nil), v[:20]...), v[25:]...) }
	r.Grid, r.Measured, r.Fitted, r.Residual = cut(r.Grid), cut(r.Measured), cut(r.Fitted), cut(r.Residual)
	r.BaselineCurve, r.Noise = cut(r.BaselineCurve), cut(r.Noise)
	for k := range r.Contributions {
		r.Contributions[k] = cut(r.Contributions[k])
	}
	r.Gaps = []unmix.Gap{{LoNM: 490, HiNM: 498, Saturated: true}}
	path := filepath.Join(dir, "gap.svg")
	if err := SaveSamplePlot(r, testLayout.Compounds, path); err != nil {
		t.Fatal(err)
	}
	checkSampleSVG(t, path, r, 2)
	if n := readSVG(t, path).count(saturatedLabel); n != 1 {
		t.Errorf("svg with a gap: %d legend entries %q, want 1", n, saturatedLabel)
	}
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("temporary file left: %s", e.Name())
		}
	}
}

// checkSampleSVG reads back the figure of sample r (drawn in segs
// stretches between gaps): title and axis labels, one legend entry per
// compound with its concentration and for the measured, baseline and
// fitted curves, one measured glyph per point (and swatch), and one
// contribution line per compound and stretch (and swatch).
func checkSampleSVG(t *testing.T, path string, r *unmix.Result, segs int) {
	t.Helper()
	d := readSVG(t, path)
	texts := []string{sampleTitle(r), "Absorbance", "Wavelength (nm)", "Residual", "measured", "baseline", "fitted"}
	for k, name := range testLayout.Compounds {
		texts = append(texts, name+" "+ConcText(r.Amounts[k].Conc, r.Amounts[k].SE))
	}
	for _, s := range texts {
		if d.count(s) != 1 {
			t.Errorf("%s: %d texts %q, want 1 (texts %q)", path, d.count(s), s, d.texts)
		}
	}
	if n := d.paths("fill:" + hex(measuredColour)); n != len(r.Grid)+1 {
		t.Errorf("%s: %d measured glyphs, want %d points and a swatch", path, n, len(r.Grid))
	}
	for k := range r.Contributions {
		style := stroke(colour(k), 1.2) + ";stroke-dasharray:5,2"
		if n := d.paths(style); n != segs+1 {
			t.Errorf("%s: %d lines %q for compound %d, want %d stretches and a swatch", path, n, style, k, segs)
		}
	}
}

// Lines break at every gap and nowhere else; each gap's band reaches
// halfway to the fitted points beside it.
func TestSamplePlotGaps(t *testing.T) {
	grid := []float64{400, 401, 405, 406, 407, 409}
	gaps := []unmix.Gap{{LoNM: 402, HiNM: 404, Saturated: true}, {LoNM: 408, HiNM: 408}, {LoNM: 410, HiNM: 411, Saturated: true}}
	got := segments(grid, gaps)
	want := [][2]int{{0, 2}, {2, 5}, {5, 6}}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("segments %v, want %v", got, want)
	}
	if s := segments(grid, nil); fmt.Sprint(s) != "[[0 6]]" {
		t.Errorf("no gaps: segments %v", s)
	}
	bands := gapBands(grid, gaps)
	wantB := []struct {
		lo, hi float64
		label  string
		first  bool
	}{{401.5, 404.5, saturatedLabel, true}, {407.5, 408.5, uncalibratedLabel, true}, {409.5, 411.5, saturatedLabel, false}}
	if len(bands) != len(wantB) {
		t.Fatalf("%d bands, want %d", len(bands), len(wantB))
	}
	for i, w := range wantB {
		b := bands[i]
		if b.lo != w.lo || b.hi != w.hi || b.label != w.label || b.first != w.first {
			t.Errorf("band %d = %g-%g %q first %v, want %g-%g %q first %v", i, b.lo, b.hi, b.label, b.first, w.lo, w.hi, w.label, w.first)
		}
	}
}

// TestTableShiftAndEmpty: the shift flag carries its value in the table's
// flag cell, and a table with no sample solved prints nothing.
func TestTableShiftAndEmpty(t *testing.T) {
	var b bytes.Buffer
	w := newTableWriter(&b, testLayout, 160)
	r := testResult("S1")
	r.Flags = []unmix.Flag{unmix.FlagSaturated, unmix.FlagShift}
	r.ShiftNM, r.SuggestDilution = 0.8312, 0
	if err := w.Write(r); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "sat,shift +0.83 nm") {
		t.Errorf("shift value missing from the flag cell:\n%s", b.String())
	}
	// A result over its range with no sample flag: the dilution alone,
	// without a leading blank.
	b.Reset()
	w = newTableWriter(&b, testLayout, 160)
	r = testResult("S2")
	r.Flags, r.SuggestDilution = nil, 2
	if err := w.Write(r); err != nil {
		t.Fatal(err)
	}
	if got := w.rows[0][len(w.rows[0])-1]; got != "(dilute 2x)" {
		t.Errorf("flag cell %q, want %q", got, "(dilute 2x)")
	}
	b.Reset()
	w = newTableWriter(&b, testLayout, 160)
	if err := w.Fail("x", errors.New("bad")); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil || b.Len() != 0 {
		t.Errorf("nothing solved: %v, output %q", err, b.String())
	}
}

// TestHeadLater: with Layout.HeadLater the CSV and JSON writers leave
// out their head, and WriteHead followed by what they wrote is the
// document they write otherwise, byte for byte, with or without samples.
func TestHeadLater(t *testing.T) {
	l := testLayout
	l.Run = &provenance.Run{Tool: "huesolve", Version: "test", Inputs: []provenance.File{{Path: "a.csv", SHA256: "00ff"}}}
	for _, format := range []string{FormatCSV, FormatJSON} {
		for _, n := range []int{0, 2} {
			write := func(l Layout) (*bytes.Buffer, ResultWriter) {
				var b bytes.Buffer
				rw, err := NewResultWriter(format, &b, l, 0)
				if err != nil {
					t.Fatal(err)
				}
				for i := range n {
					if err := rw.Write(testResult(fmt.Sprint("S", i))); err != nil {
						t.Fatal(err)
					}
				}
				if err := rw.Fail("x.csv", errors.New("bad")); err != nil {
					t.Fatal(err)
				}
				if err := rw.Close(); err != nil {
					t.Fatal(err)
				}
				return &b, rw
			}
			want, _ := write(l)
			later := l
			later.HeadLater = true
			body, rw := write(later)
			var got bytes.Buffer
			if err := rw.(HeadWriter).WriteHead(&got); err != nil {
				t.Fatal(err)
			}
			if body.Len() >= want.Len() || !strings.Contains(got.String(), "00ff") {
				t.Fatalf("%s, %d samples: the head was not left out", format, n)
			}
			got.Write(body.Bytes())
			if got.String() != want.String() {
				t.Errorf("%s, %d samples: head then body\n%s\nwant\n%s", format, n, got.String(), want.String())
			}
		}
	}
}
