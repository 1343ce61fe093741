package unmix

import (
	"slices"
	"strings"
	"testing"

	"huesolve/spectrum"
)

// SheetUse: a sample found by name or by file name marks its row used;
// one the sheet does not name takes zero factors and is listed; rows no
// sample matched are listed in sheet order.
func TestSheetUse(t *testing.T) {
	ss, err := parseSampleSheet(strings.NewReader("sample,dilution\nb,2\na,4\nc,8\n"), "ss.csv")
	if err != nil {
		t.Fatal(err)
	}
	u := NewSheetUse(ss)
	if f := u.Factors(&spectrum.Spectrum{Name: "a"}); f.Dilution != 4 {
		t.Errorf("a: dilution %g, want 4", f.Dilution)
	}
	if f := u.Factors(&spectrum.Spectrum{Name: "x", Source: spectrum.Source{File: "dir/c.csv"}}); f.Dilution != 8 {
		t.Errorf("c.csv: dilution %g, want 8", f.Dilution)
	}
	if f := u.Factors(&spectrum.Spectrum{Name: "zz"}); f != (Factors{NotInSheet: true}) {
		t.Errorf("zz: factors %+v, want none, marked not in the sheet", f)
	}
	if got := u.Defaulted(); !slices.Equal(got, []string{"zz"}) {
		t.Errorf("Defaulted = %q", got)
	}
	if got := u.Unused(); !slices.Equal(got, []string{"b"}) {
		t.Errorf("Unused = %q", got)
	}

	none := NewSheetUse(nil)
	if f := none.Factors(&spectrum.Spectrum{Name: "a"}); f != (Factors{}) || none.Defaulted() != nil || none.Unused() != nil {
		t.Errorf("no sheet: factors %+v, defaulted %q, unused %q", f, none.Defaulted(), none.Unused())
	}
}

// Near offers the row a name was likely meant to match (case, separators,
// leading zeros), and nothing for a name unlike every row.
func TestSheetNear(t *testing.T) {
	ss, err := parseSampleSheet(strings.NewReader("sample,dilution\nM7,2\nlot A-10,4\nX0,8\n"), "ss.csv")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ name, want string }{
		{"M07", "M7"}, {"m007", "M7"}, {"LOT_a10", "lot A-10"}, {"x00", "X0"}, {"M70", ""}, {"X", ""}, {"", ""},
	} {
		got, ok := ss.Near(c.name)
		if got != c.want || ok != (c.want != "") {
			t.Errorf("Near(%q) = %q, %v; want %q", c.name, got, ok, c.want)
		}
	}
}

// A sample solved with factors marked NotInSheet carries the warning flag
// nosheet (so the run counts it flagged) and the same numbers as without
// the mark; the flag is in the legend.
func TestNotInSheetFlag(t *testing.T) {
	m := mustModel(t, testSet(4), Options{})
	s := mixture{conc: []float64{1, 2, 0.5, 1}, noise: testNoise, seed: 7}.spectrum()
	plain := mustSolve(t, m, s, Factors{})
	plainConc := plain.Amounts[0].Conc
	if slices.Contains(plain.Flags, FlagNotInSheet) || plain.Flagged() {
		t.Fatalf("plain sample flagged %v", plain.Flags)
	}
	r := mustSolve(t, m, s, Factors{NotInSheet: true})
	if !slices.Contains(r.Flags, FlagNotInSheet) || !r.Flagged() || r.Amounts[0].Conc != plainConc || r.Dilution != 1 {
		t.Errorf("not in the sheet: flags %v, flagged %v, conc %g (want %g), dilution %g", r.Flags, r.Flagged(), r.Amounts[0].Conc, plainConc, r.Dilution)
	}
	if !strings.Contains(Legend(), "nosheet   ! not in the sample sheet") {
		t.Errorf("legend lacks nosheet:\n%s", Legend())
	}
}
