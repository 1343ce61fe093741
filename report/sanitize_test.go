package report

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"huesolve/spectrum"
	"huesolve/validate"
)

// hostileNames are sample and scan names as a careless or hostile file
// may hold them: a terminal colour escape, a line break, a bidirectional
// override, and cells a spreadsheet would run as formulas.
var hostileNames = []string{
	"\x1b[31mred\x1b[0m", "two\nlines", "abc\u202edef",
	"=cmd|' /C calc'!A0", "+1+2", "-2+3", "@SUM(A1)", "\t=1+1", "=HYPERLINK(\"x\",\"y\"), z",
}

// TestTermText: a name with a control character reaches the terminal
// escaped and quoted; a safe one (accents, µ, spaces) unchanged.
func TestTermText(t *testing.T) {
	for in, want := range map[string]string{
		"lot 101":         "lot 101",
		"Bräunung µ-1":    "Bräunung µ-1",
		"=cmd":            "=cmd",
		"\x1b[31mred":     `"\x1b[31mred"`,
		"two\nlines":      `"two\nlines"`,
		"tab\there":       `"tab\there"`,
		"abc\u202edef":    `"abc\u202edef"`,
		"c1\u009bcontrol": `"c1\u009bcontrol"`,
		"bad\xffutf8":     `"bad\xffutf8"`,
	} {
		if got := termText(in); got != want {
			t.Errorf("termText(%q) = %s, want %s", in, got, want)
		}
	}
}

// TestCSVText: text cells that start like a formula get a single quote;
// plain numbers in text cells and everything else stay as they are.
func TestCSVText(t *testing.T) {
	for in, want := range map[string]string{
		"lot 101": "lot 101", "": "", "=1+1": "'=1+1", "+A1": "'+A1", "-A1": "'-A1", "@A1": "'@A1",
		"\t=1": "'\t=1", "\r=1": "'\r=1", "-0.0012": "-0.0012", "+5": "+5", "-1e-3": "-1e-3", "a=b": "a=b",
	} {
		if got := csvText(in); got != want {
			t.Errorf("csvText(%q) = %q, want %q", in, got, want)
		}
		if got := string(appendCSVText(nil, in)); got != string(appendCSVField(nil, want)) {
			t.Errorf("appendCSVText(%q) = %q, want the field %q", in, got, want)
		}
	}
}

// TestHostileNamesInResults: hostile sample and compound names reach
// solve's table escaped, its CSV with formula cells protected (numbers,
// negative ones included, untouched) and its JSON exactly.
func TestHostileNamesInResults(t *testing.T) {
	l := Layout{Compounds: []string{"=amber", "teal"}, Units: []string{"mg/L", "-mg/L"}, Baseline: []string{"offset"}}
	var table, csvOut, js bytes.Buffer
	tw := newTableWriter(&table, l, 200)
	cw := NewCSVWriter(&csvOut, l)
	jw := newJSONWriter(&js, l)
	for _, n := range hostileNames {
		r := testResult(n)
		r.Source = n + ".csv"
		r.Amounts[0].Compound = "=amber"
		r.Amounts[1].Unit = "-mg/L"
		for _, w := range []ResultWriter{tw, cw, jw} {
			if err := w.Write(r); err != nil {
				t.Fatal(err)
			}
		}
	}
	for _, c := range []ResultWriter{tw, cw, jw} {
		if err := c.Close(); err != nil {
			t.Fatal(err)
		}
	}
	out := table.String()
	if strings.ContainsAny(out, "\x1b\u202e") || strings.Contains(out, "two\nlines") {
		t.Errorf("a control character reached the table:\n%q", out)
	}
	for _, want := range []string{`"\x1b[31mred\x1b[0m"`, `"two\nlines"`, `"abc\u202edef"`, "=cmd|' /C calc'!A0", "=amber (mg/L)"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %s:\n%s", want, out)
		}
	}

	recs, err := commentedCSV(&csvOut).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	if _, ok := col["'=amber_conc"]; !ok {
		t.Errorf("header cell of compound =amber not protected: %q", recs[0])
	}
	for i, n := range hostileNames {
		rec := recs[i+1]
		want := n
		if strings.ContainsAny(n[:1], "=+-@\t") {
			want = "'" + n
		}
		if rec[0] != want || rec[1] != want+".csv" {
			t.Errorf("sample %q: CSV cells %q, %q; want %q", n, rec[0], rec[1], want)
		}
		// Numbers stay numbers, negative ones too; the unit is text.
		if got := rec[col["teal_unconstrained"]]; got != "-0.0042" {
			t.Errorf("teal_unconstrained = %q, want -0.0042", got)
		}
		if got := rec[col["teal_unit"]]; got != "'-mg/L" {
			t.Errorf("teal_unit = %q, want '-mg/L", got)
		}
	}

	var doc struct {
		Compounds []struct{ Name, Unit string }
		Samples   []struct{ Sample, Source string }
	}
	if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Compounds[0].Name != "=amber" || doc.Compounds[1].Unit != "-mg/L" {
		t.Errorf("JSON compounds changed: %+v", doc.Compounds)
	}
	for i, n := range hostileNames {
		if doc.Samples[i].Sample != n || doc.Samples[i].Source != n+".csv" {
			t.Errorf("JSON sample %d = %q, %q; want %q exactly", i, doc.Samples[i].Sample, doc.Samples[i].Source, n)
		}
	}
}

// TestHostileNamesInLook: look's table and plain rows show a scan name
// with an escape sequence escaped.
func TestHostileNamesInLook(t *testing.T) {
	s := &spectrum.Spectrum{Name: "\x1b]0;owned\x07scan", Wavelengths: []float64{400, 401}, Values: []float64{0.1, 0.2},
		Quantity: spectrum.Absorbance}
	for _, plain := range []bool{false, true} {
		var b bytes.Buffer
		if err := WriteLook(&b, "dir/\x1b[2Jfile.csv", []*spectrum.Spectrum{s}, LookOptions{Plain: plain}); err != nil {
			t.Fatal(err)
		}
		if strings.ContainsAny(b.String(), "\x1b\x07") || !strings.Contains(b.String(), `"\x1b]0;owned\ascan"`) ||
			!strings.Contains(b.String(), `"dir/\x1b[2Jfile.csv"`) {
			t.Errorf("plain %v: %q", plain, b.String())
		}
	}
}

// TestHostileNamesInValidationCSV: the check standards' and windows' CSV
// protect text cells that start like formulas and leave numbers alone.
func TestHostileNamesInValidationCSV(t *testing.T) {
	v := &validate.Verification{Rows: []validate.CheckRow{{Standard: "=1+1", Compound: "@dye", Unit: "+u", Known: 1, Found: -0.5}}}
	var b bytes.Buffer
	if err := WriteVerifyCSV(&b, v, nil); err != nil {
		t.Fatal(err)
	}
	recs, err := commentedCSV(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if r := recs[1]; r[1] != "'=1+1" || r[2] != "'@dye" || r[3] != "'+u" || r[5] != "-0.5" {
		t.Errorf("verify CSV row %q", r)
	}
	adv := &validate.WindowAdvice{Compounds: []string{"=dye"}, Units: []string{""},
		Candidates: []validate.Candidate{{Lo: 400, Hi: 500, Points: 101, Cond: 2, Worst: 0.1, WorstCompound: "=dye", SE: []float64{-0.25}, RelSE: []float64{0.1}}}}
	b.Reset()
	if err := WriteWindowCSV(&b, adv); err != nil {
		t.Fatal(err)
	}
	if recs, err = commentedCSV(&b).ReadAll(); err != nil {
		t.Fatal(err)
	}
	if r := recs[1]; r[7] != "'=dye" || r[8] != "-0.25" {
		t.Errorf("window CSV row %q", r)
	}
}
