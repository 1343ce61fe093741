package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"huesolve/reference"
)

func TestWindowTableJSONCSV(t *testing.T) {
	dir, refs, _ := valCase(t, 1)
	plots := filepath.Join(dir, "plots")
	out, errOut, code := run(t, "window", refs, "--plots", plots, "--level", "red=5", "--top", "5")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"Recommended:", "best", "Figures of merit", "red 5 mg/L"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if !strings.Contains(errOut, "recommended window") {
		t.Errorf("stderr lacks the recommendation: %s", errOut)
	}
	for _, f := range []string{"window-error.png", "window-cond.png"} {
		if st, err := os.Stat(filepath.Join(plots, f)); err != nil || st.Size() == 0 {
			t.Errorf("plot %s: %v", f, err)
		}
	}

	jsonFile := filepath.Join(dir, "w.json")
	if _, errOut, code := run(t, "window", refs, "--format", "json", "-o", jsonFile); code != exitOK {
		t.Fatalf("json: exit %d: %s", code, errOut)
	}
	raw, err := os.ReadFile(jsonFile)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Recommended [2]float64 `json:"recommended_nm"`
		Advice      struct {
			Best       int
			Candidates []struct {
				Lo float64 `json:"lo_nm"`
				Hi float64 `json:"hi_nm"`
			}
		}
		Merits struct {
			Compounds []struct{ Selectivity float64 }
		} `json:"figures_of_merit"`
	}
	if err := json.Unmarshal(raw, &rep); err != nil {
		t.Fatal(err)
	}
	b := rep.Advice.Candidates[rep.Advice.Best]
	if b.Lo != rep.Recommended[0] || b.Hi != rep.Recommended[1] || len(rep.Merits.Compounds) != 2 {
		t.Errorf("json: recommended %v, best candidate %+v, %d merits", rep.Recommended, b, len(rep.Merits.Compounds))
	}

	out, errOut, code = run(t, "window", refs, "--format", "csv", "--step", "20", "--min-width", "100")
	if code != exitOK {
		t.Fatalf("csv: exit %d: %s", code, errOut)
	}
	recs, err := commentedCSV(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	// Edges 400, 420, ..., 700 (16); pairs at least 100 nm apart: for a
	// start at edge i, the ends i+5 .. 15, so Σ_{i=0}^{10} (11 - i) = 66.
	if len(recs) != 1+66 {
		t.Errorf("csv: %d rows, want 66 windows", len(recs)-1)
	}
	nbest := 0
	for _, r := range recs[1:] {
		if r[len(r)-1] == "true" {
			nbest++
		}
	}
	if nbest != 1 {
		t.Errorf("csv: %d recommended rows", nbest)
	}
}

// From the command line, the advisor keeps away from a band two compounds
// share (see validate.TestAdviseWindowAvoidsIndistinguishableBand).
func TestWindowAvoidsSharedBand(t *testing.T) {
	var g []float64
	for w := 400.0; w <= 700; w++ {
		g = append(g, w)
	}
	band := func(c, s, h float64) []float64 {
		v := make([]float64, len(g))
		for i, w := range g {
			v[i] = h * math.Exp(-0.5*math.Pow((w-c)/s, 2))
		}
		return v
	}
	sum := func(a, b []float64) []float64 {
		for i := range a {
			a[i] += b[i]
		}
		return a
	}
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: 1, Ceiling: 2, Noise: make([]float64, len(g))}
	for i := range set.Noise {
		set.Noise[i] = 0.001
	}
	for _, c := range []struct {
		name string
		own  float64
	}{{"A", 590}, {"B", 650}} {
		// A saved set records a band maximum and a standards range;
		// 1 to 1 mg/L keeps the level errors are judged at at 1 mg/L.
		set.Compounds = append(set.Compounds, reference.Compound{Name: c.name, Unit: "mg/L", PeakNM: 450, MinStandard: 1, MaxStandard: 1,
			Absorptivity: sum(band(450, 20, 1), band(c.own, 15, 0.3)), SE: make([]float64, len(g)), Usable: make([]bool, len(g))})
	}
	for k := range set.Compounds {
		for i := range g {
			set.Compounds[k].Usable[i] = true
		}
	}
	refs := filepath.Join(t.TempDir(), "shared.json")
	if err := set.Save(refs); err != nil {
		t.Fatal(err)
	}
	out, errOut, code := run(t, "window", refs, "--max-width", "150", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep struct {
		Recommended [2]float64 `json:"recommended_nm"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if lo, hi := rep.Recommended[0], rep.Recommended[1]; lo < 500 || hi < 655 {
		t.Errorf("recommended %g-%g nm, want clear of the shared band at 450 nm and covering 590 and 650 nm", lo, hi)
	}
}

func TestWindowBadFlags(t *testing.T) {
	_, refs, _ := valCase(t, 1)
	for _, args := range [][]string{
		{"--step", "-1"},
		{"--min-width", "0"},
		{"--max-width", "10"},
		{"--level", "nosuch=1"},
		{"--level", "red"},
		{"--level", "red=-2"},
		{"--search", "700-400"},
		{"--baseline", "zigzag"},
		{"--format", "yaml"},
		{"--top", "0"},
		{"--equivalent", "-5"},
	} {
		_, errOut, code := run(t, append([]string{"window", refs}, args...)...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d (stderr %q)", args, code, exitUsage, errOut)
		}
	}
}

// TestReadmeWindowCSVColumns: the README lists exactly the columns that
// window --format csv writes, and says its relative errors are fractions
// (checked against the table, which shows percent).
func TestReadmeWindowCSVColumns(t *testing.T) {
	var text strings.Builder
	for _, l := range readReadme(t) {
		text.WriteString(l.text + "\n")
	}
	readme := text.String()
	start := strings.Index(readme, "`window --format csv` writes")
	end := strings.Index(readme[max(start, 0):], "`--format json`")
	if start < 0 || end < 0 {
		t.Fatal("README: no paragraph starting \"`window --format csv` writes\"")
	}
	para := readme[start : start+end]
	documented := map[string]bool{}
	for _, m := range codeSpan.FindAllStringSubmatch(para, -1) {
		if !strings.Contains(m[1], " ") {
			documented[m[1]] = true
		}
	}
	if !strings.Contains(para, "fractions of the level, not percent") {
		t.Errorf("README does not say the relative errors are fractions:\n%s", para)
	}

	_, refs, _ := valCase(t, 1)
	out, errOut, code := run(t, "window", refs, "--format", "csv")
	if code != exitOK {
		t.Fatalf("window: exit %d\n%s", code, errOut)
	}
	rows, err := commentedCSV(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	actual := map[string]bool{}
	for _, col := range rows[0] {
		for _, n := range []string{"red", "yellow"} {
			for _, pre := range []string{"se_", "relative_se_"} {
				if col == pre+n {
					col = pre + "NAME"
				}
			}
		}
		actual[col] = true
		if !documented[col] {
			t.Errorf("README: window's CSV column %s is not documented", col)
		}
	}
	for f := range documented {
		if !actual[f] {
			t.Errorf("README: documents window CSV column %s, which window does not write", f)
		}
	}

	// The recommended row's worst_relative_se is the table's percent / 100.
	col := map[string]int{}
	for i, c := range rows[0] {
		col[c] = i
	}
	var frac float64
	for _, r := range rows[1:] {
		if r[col["recommended"]] == "true" {
			frac, err = strconv.ParseFloat(r[col["worst_relative_se"]], 64)
			if err != nil {
				t.Fatal(err)
			}
		}
	}
	table, _, _ := run(t, "window", refs)
	m := regexp.MustCompile(`worst predicted error ([0-9.]+) %`).FindStringSubmatch(table)
	if m == nil {
		t.Fatalf("table lacks the recommended window's worst error:\n%s", table)
	}
	pct, _ := strconv.ParseFloat(m[1], 64)
	if math.Abs(100*frac-pct) > 0.01*pct {
		t.Errorf("worst_relative_se %g is not the table's %g %% as a fraction", frac, pct)
	}
}
