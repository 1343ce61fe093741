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
	if f := u.Factors(&spectrum.Spectrum{Name: "zz"}); f != (Factors{}) {
		t.Errorf("zz: factors %+v, want none", f)
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
