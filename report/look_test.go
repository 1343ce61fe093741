package report

import (
	"fmt"
	"strings"
	"testing"

	"huesolve/spectrum"
)

// WriteLook: plain rows name the file and give even steps as one number,
// uneven ones as their range; a table lists LookRowsShown spectra and
// counts the rest unless All.
func TestWriteLook(t *testing.T) {
	even := &spectrum.Spectrum{Name: "even", Wavelengths: []float64{400, 405, 410}, Values: []float64{0.1, 0.5, 0.2}, Quantity: spectrum.Absorbance}
	uneven := &spectrum.Spectrum{Name: "uneven", Wavelengths: []float64{400, 401, 410}, Values: []float64{1, 2, 3}, Quantity: spectrum.Absorbance}
	var b strings.Builder
	if err := WriteLook(&b, "f.csv", []*spectrum.Spectrum{even, uneven}, LookOptions{Plain: true}); err != nil {
		t.Fatal(err)
	}
	want := "f.csv\teven\t3\t400-410\t5\tabsorbance\t0.1\t0.5\n" +
		"f.csv\tuneven\t3\t400-410\t1-9 uneven\tabsorbance\t1\t3\n"
	if b.String() != want {
		t.Errorf("plain rows %q, want %q", b.String(), want)
	}

	many := make([]*spectrum.Spectrum, LookRowsShown+3)
	for i := range many {
		s := *even
		s.Name = fmt.Sprintf("s%d", i)
		many[i] = &s
	}
	for _, all := range []bool{false, true} {
		b.Reset()
		if err := WriteLook(&b, "wide.csv", many, LookOptions{All: all, Gap: true}); err != nil {
			t.Fatal(err)
		}
		out := b.String()
		if !strings.HasPrefix(out, "\nwide.csv: 43 spectra\n") {
			t.Errorf("all %v: first lines %q", all, out[:min(len(out), 40)])
		}
		cut := strings.Contains(out, "... and 3 more (use --all to list them)")
		if cut == all || strings.Contains(out, " s42 ") != all {
			t.Errorf("all %v:\n%s", all, out)
		}
	}
}
