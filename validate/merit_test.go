package validate

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/unmix"
)

var noBaseline = baseline.Model{Degree: -1}

// Selectivity is 1 for a compound whose spectrum is orthogonal to every
// other column: nothing of it can be imitated (definition of the net
// analyte signal, Lorber, Anal. Chem. 58 (1986) 1167; SEL = ||s*||/||s||,
// Olivieri et al., Pure Appl. Chem. 78 (2006) 633).
func TestSelectivityOrthogonal(t *testing.T) {
	g := grid(400, 700, 1)
	// Two bands far apart (overlap below 1e-30) are orthogonal.
	a := gauss(g, 450, 10, 1)
	b := gauss(g, 650, 10, 0.5)
	set := memSet(g, []string{"A", "B"}, [][]float64{a, b}, 0.001)
	m, err := FiguresOfMerit(set, MeritOptions{Baseline: noBaseline})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range m.Compounds {
		if !scalar.EqualWithinAbs(c.Selectivity, 1, 1e-12) {
			t.Errorf("selectivity of %s = %.15g, want 1", c.Compound, c.Selectivity)
		}
		if !c.Quantifiable {
			t.Errorf("%s refused: %s", c.Compound, c.Reason)
		}
	}
	if err := m.Err(); err != nil {
		t.Errorf("Err() = %v, want nil", err)
	}
	// Exactly orthogonal by construction: disjoint supports.
	x := make([]float64, 10)
	y := make([]float64, 10)
	for i := 0; i < 5; i++ {
		x[i] = float64(i + 1)
		y[i+5] = float64(5 - i)
	}
	set = memSet(grid(401, 410, 1), []string{"X", "Y"}, [][]float64{x, y}, 0.01)
	m, err = FiguresOfMerit(set, MeritOptions{Baseline: noBaseline})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range m.Compounds {
		if c.Selectivity != 1 {
			t.Errorf("disjoint supports: selectivity of %s = %.17g, want exactly 1", c.Compound, c.Selectivity)
		}
	}
}

// A compound whose spectrum is a copy (a multiple) of another's has no net
// analyte signal, selectivity 0, and is refused with errNotSelective; the
// copied compound is refused too, since each imitates the other.
func TestSelectivityDuplicateRefused(t *testing.T) {
	g := grid(400, 700, 1)
	a := gauss(g, 500, 30, 1)
	b := gauss(g, 600, 25, 0.8)
	dup := make([]float64, len(a))
	for i := range a {
		dup[i] = 2.5 * a[i]
	}
	set := memSet(g, []string{"A", "B", "A2"}, [][]float64{a, b, dup}, 0.001)
	for _, bl := range []baseline.Model{noBaseline, {Degree: 0}, {Degree: 1}} {
		m, err := FiguresOfMerit(set, MeritOptions{Baseline: bl})
		if err != nil {
			t.Fatal(err)
		}
		for _, i := range []int{0, 2} {
			c := m.Compounds[i]
			if c.Selectivity > 1e-8 || c.Quantifiable {
				t.Errorf("%s: %s selectivity %g quantifiable %v, want 0 and refused", bl, c.Compound, c.Selectivity, c.Quantifiable)
			}
			if !strings.Contains(c.Reason, "copy of") {
				t.Errorf("%s: %s reason %q, want it to name the copy", bl, c.Compound, c.Reason)
			}
		}
		if c := m.Compounds[1]; !c.Quantifiable || c.Selectivity < 0.5 {
			t.Errorf("%s: B selectivity %g quantifiable %v, want it unaffected by the duplicate pair", bl, c.Selectivity, c.Quantifiable)
		}
		err = m.Err()
		if !errors.Is(err, errNotSelective) {
			t.Fatalf("%s: Err() = %v, want errNotSelective", bl, err)
		}
		var ue *unquantifiableError
		if !errors.As(err, &ue) || ue.Compound != "A" {
			t.Errorf("%s: first refusal %+v, want compound A", bl, ue)
		}
		if !strings.Contains(err.Error(), "A2") {
			t.Errorf("%s: error %q does not name A2", bl, err)
		}
	}
}

// A compound the baseline terms can imitate (a flat spectrum under an
// offset model, a straight line under a linear one) is refused with a
// reason naming the baseline.
func TestSelectivityBaselineImitates(t *testing.T) {
	g := grid(400, 700, 1)
	a := gauss(g, 500, 30, 1)
	flat := make([]float64, len(g))
	ramp := make([]float64, len(g))
	for i, w := range g {
		flat[i] = 0.3
		ramp[i] = 0.1 + 0.001*(w-400)
	}
	cases := []struct {
		name  string
		model baseline.Model
		other []float64
	}{
		{"flat/offset", baseline.Model{Degree: 0}, flat},
		{"ramp/linear", baseline.Model{Degree: 1}, ramp},
	}
	for _, tc := range cases {
		set := memSet(g, []string{"A", "Z"}, [][]float64{a, tc.other}, 0.001)
		m, err := FiguresOfMerit(set, MeritOptions{Baseline: tc.model})
		if err != nil {
			t.Fatal(err)
		}
		z := m.Compounds[1]
		if z.Quantifiable || z.Selectivity > 1e-8 || !strings.Contains(z.Reason, "baseline terms") {
			t.Errorf("%s: Z selectivity %g quantifiable %v reason %q, want refused by the baseline", tc.name, z.Selectivity, z.Quantifiable, z.Reason)
		}
		// Without baseline terms the same compound is fine.
		m, err = FiguresOfMerit(set, MeritOptions{Baseline: noBaseline})
		if err != nil {
			t.Fatal(err)
		}
		if !m.Compounds[1].Quantifiable {
			t.Errorf("%s: refused without baseline terms: %s", tc.name, m.Compounds[1].Reason)
		}
	}
}

// A two-compound case worked by hand. Three wavelengths, path 2 cm,
// absorptivities ε1 = (2, 1, 0) and ε2 = (0, 1, 1), so the columns are
// s1 = 2ε1 = (4, 2, 0) and s2 = 2ε2 = (0, 2, 2).
//
// Net analyte signal of compound 1: remove from s1 its projection on s2,
//
//	s1* = s1 - (s1·s2 / s2·s2) s2 = (4,2,0) - (4/8)(0,2,2) = (4, 1, -1),
//	SEN1 = ||s1*|| = √18 = 4.2426..., ||s1|| = √20, SEL1 = √(18/20) = √0.9.
//
// Compound 2: s2* = s2 - (s1·s2 / s1·s1) s1 = (0,2,2) - (4/20)(4,2,0)
// = (-0.8, 1.6, 2), SEN2 = √7.2 = 2.6833..., ||s2|| = √8, SEL2 = √0.9.
//
// Cross-check by the pseudo-inverse: SᵀS = [[20, 4], [4, 8]], det 144,
// (SᵀS)⁻¹ = [[8, -4], [-4, 20]]/144, and SEN_n = 1/√((SᵀS)⁻¹_nn):
// 1/√(8/144) = √18 and 1/√(20/144) = √7.2 (Lorber, Faber and Kowalski,
// Anal. Chem. 69 (1997) 1620, SEN = 1/||row n of S⁺||).
//
// With σ = 0.01 at every wavelength: LOD1 = 3.3·0.01/√18, LOQ1 = 0.1/√18
// (ICH Q2(R2): LOD = 3.3σ/S, LOQ = 10σ/S).
func TestNetAnalyteSignalByHand(t *testing.T) {
	set := memSet([]float64{500, 510, 520}, []string{"one", "two"},
		[][]float64{{2, 1, 0}, {0, 1, 1}}, 0.01)
	for _, weighted := range []bool{false, true} {
		m, err := FiguresOfMerit(set, MeritOptions{Baseline: noBaseline, PathCM: 2, Weighted: weighted, Sigma: 0.01})
		if err != nil {
			t.Fatal(err)
		}
		want := []struct{ sen, sel float64 }{{math.Sqrt(18), math.Sqrt(0.9)}, {math.Sqrt(7.2), math.Sqrt(0.9)}}
		for i, c := range m.Compounds {
			if !scalar.EqualWithinRel(c.Sensitivity, want[i].sen, 1e-14) {
				t.Errorf("SEN(%s) = %.16g, want %.16g", c.Compound, c.Sensitivity, want[i].sen)
			}
			if !scalar.EqualWithinRel(c.Selectivity, want[i].sel, 1e-14) {
				t.Errorf("SEL(%s) = %.16g, want %.16g", c.Compound, c.Selectivity, want[i].sel)
			}
			if !scalar.EqualWithinRel(c.LOD, 3.3*0.01/want[i].sen, 1e-13) {
				t.Errorf("weighted %v: LOD(%s) = %.16g, want %.16g", weighted, c.Compound, c.LOD, 3.3*0.01/want[i].sen)
			}
			if !scalar.EqualWithinRel(c.LOQ, 10*0.01/want[i].sen, 1e-13) {
				t.Errorf("weighted %v: LOQ(%s) = %.16g, want %.16g", weighted, c.Compound, c.LOQ, 0.1/want[i].sen)
			}
		}
		if m.Points != 3 || m.PathCM != 2 || !scalar.EqualWithinRel(m.Sigma, 0.01, 1e-15) {
			t.Errorf("points %d path %g sigma %g, want 3, 2, 0.01", m.Points, m.PathCM, m.Sigma)
		}
	}
}

// With noise that differs between wavelengths, the blank-level standard
// error must equal the sandwich form sqrt(diag(S⁺ Σ S⁺ᵀ)) for an
// unweighted fit and sqrt(diag((SᵀΣ⁻¹S)⁻¹)) for a weighted one; here both
// are computed directly with gonum's general solvers as the reference. Σ is
// the set's noise as solve uses it at A = 0 (see unmix: the noise times
// sqrt(1 + 10^(-2 WeightKneeA))).
func TestStandardErrorMatchesDirect(t *testing.T) {
	g := grid(400, 600, 2)
	a := gauss(g, 470, 25, 1)
	b := gauss(g, 520, 30, 0.7)
	c := gauss(g, 560, 20, 0.4)
	set := memSet(g, []string{"a", "b", "c"}, [][]float64{a, b, c}, 0)
	for i, w := range g {
		set.Noise[i] = 0.001 * (1 + 3*math.Exp(-0.5*math.Pow((w-500)/30, 2)))
	}
	blankFactor := math.Sqrt(1 + math.Pow(10, -2*unmix.WeightKneeA))
	noise := make([]float64, len(g))
	for i, v := range set.Noise {
		noise[i] = v * blankFactor
	}
	model := baseline.Model{Degree: 1}
	cols, _, _, err := model.Columns(g)
	if err != nil {
		t.Fatal(err)
	}
	X := mat.NewDense(len(g), 5, nil)
	for i := range g {
		X.SetRow(i, []float64{a[i], b[i], c[i], cols[0][i], cols[1][i]})
	}
	// Unweighted: S⁺ from a QR solve of X against the identity.
	var pinv mat.Dense
	id := mat.NewDense(len(g), len(g), nil)
	for i := range g {
		id.Set(i, i, 1)
	}
	var qr mat.QR
	qr.Factorize(X)
	if err := qr.SolveTo(&pinv, false, id); err != nil {
		t.Fatal(err)
	}
	// Weighted: (XᵀWX)⁻¹ from the SVD of W^½X.
	Xw := mat.DenseCopyOf(X)
	for i := range g {
		row := Xw.RawRowView(i)
		for j := range row {
			row[j] /= noise[i]
		}
	}
	var svd mat.SVD
	svd.Factorize(Xw, mat.SVDThin)
	var v mat.Dense
	svd.VTo(&v)
	sv := svd.Values(nil)
	for _, weighted := range []bool{false, true} {
		m, err := FiguresOfMerit(set, MeritOptions{Baseline: model, Weighted: weighted})
		if err != nil {
			t.Fatal(err)
		}
		for n := 0; n < 3; n++ {
			var want float64
			if weighted {
				for k, s := range sv {
					want += v.At(n, k) * v.At(n, k) / (s * s)
				}
			} else {
				for i := range g {
					p := pinv.At(n, i) * noise[i]
					want += p * p
				}
			}
			want = math.Sqrt(want)
			if got := m.Compounds[n].SE; !scalar.EqualWithinRel(got, want, 1e-9) {
				t.Errorf("weighted %v: SE(%s) = %.12g, want %.12g", weighted, m.Compounds[n].Compound, got, want)
			}
		}
	}
}

func TestFiguresOfMeritErrors(t *testing.T) {
	g := grid(400, 500, 10)
	a := gauss(g, 450, 20, 1)
	set := memSet(g, []string{"A"}, [][]float64{a}, 0.001)
	set.Noise = nil
	if _, err := FiguresOfMerit(set, MeritOptions{}); !errors.Is(err, errNoNoise) {
		t.Errorf("no noise model: err = %v, want errNoNoise", err)
	}
	if _, err := FiguresOfMerit(set, MeritOptions{Sigma: 0.001}); err != nil {
		t.Errorf("no noise model but Sigma given: err = %v", err)
	}
	if _, err := FiguresOfMerit(set, MeritOptions{Sigma: 0.001, WindowLo: 445, WindowHi: 455}); !errors.Is(err, errWindow) {
		t.Errorf("one-point window: err = %v, want errWindow", err)
	}
	if _, err := FiguresOfMerit(set, MeritOptions{Sigma: 0.001, PathCM: -1}); err == nil {
		t.Error("negative path: no error")
	}
	if _, err := FiguresOfMerit(nil, MeritOptions{}); err == nil {
		t.Error("nil set: no error")
	}
}
