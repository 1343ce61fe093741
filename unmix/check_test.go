package unmix

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"huesolve/spectrum"
)

// TestBatchCheckOnly: with CheckOnly every sample is read and checked but
// not solved; a scan that does not cover the window, one with a bad
// factor and an unreadable file are reported as solving would report
// them.
func TestBatchCheckOnly(t *testing.T) {
	sizes := map[string]int{"a.csv": 3, "b.csv": 2}
	read := fakeFiles(sizes, map[string]bool{"bad.csv": true})
	b := &Batch{Model: mustModel(t, testSet(4), Options{}), Workers: 2, CheckOnly: true,
		ReadFile: func(path string, opt spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
			ss, err := read(path, opt)
			if path == "b.csv" && err == nil {
				short := ss[1].Clone()
				short.Wavelengths, short.Values = short.Wavelengths[5:], short.Values[5:]
				ss[1] = short
			}
			return ss, err
		},
		Factors: func(s *spectrum.Spectrum) (Factors, error) {
			if strings.HasSuffix(s.Name, "a.csv#2") {
				return Factors{Dilution: -1}, nil
			}
			return Factors{}, nil
		},
		Each: func(int, *Result) error { t.Error("Each called in a check-only run"); return nil },
	}
	var errs []error
	var checked []bool
	sum, err := b.Run(context.Background(), []Input{{Path: "a.csv"}, {Path: "bad.csv"}, {Path: "b.csv"}}, func(o Outcome) error {
		if o.Result != nil {
			t.Errorf("outcome %d has a result", o.Seq)
		}
		errs = append(errs, o.Err)
		checked = append(checked, o.Checked)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	want := Summary{Files: 3, Unreadable: 1, Samples: 5, Checked: 3, Failed: 2, Emitted: 6}
	if sum != want {
		t.Errorf("summary %+v, want %+v", sum, want)
	}
	if !checked[0] || !checked[1] || checked[2] || !errors.Is(errs[2], ErrFactor) || checked[3] || !checked[4] || !errors.Is(errs[5], ErrCoverage) {
		t.Errorf("checked %v, errors %v", checked, errs)
	}
}

// TestCheckTooDark: Check refuses what SolveTo would refuse for too many
// points above the ceiling (a %T file read as absorbance, say), with the
// same error, and passes a sample SolveTo can fit.
func TestCheckTooDark(t *testing.T) {
	m := mustModel(t, testSet(4), Options{})
	good := mixture{conc: []float64{5, 3, 2, 8}, noise: testNoise, seed: 31}.spectrum()
	if err := m.Check(good, Factors{}); err != nil {
		t.Errorf("good sample: %v", err)
	}
	pt := good.Clone()
	for i, a := range good.Values {
		pt.Values[i] = 100 * math.Pow(10, -a) // %T values, taken as absorbance
	}
	cerr := m.Check(pt, Factors{})
	_, serr := m.Solve(pt, Factors{})
	if !errors.Is(cerr, ErrTooDark) || serr == nil || cerr.Error() != serr.Error() {
		t.Errorf("%%T read as absorbance: Check %v, Solve %v", cerr, serr)
	}
}
