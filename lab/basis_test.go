package lab

import (
	"errors"
	"math"
	"strings"
	"testing"

	"huesolve/internal/near"
	"huesolve/internal/units"
)

// TestConvertFraction checks the mass-fraction basis against an example
// worked by hand: 2.5 g (u 0.001 g) made up to 50 mL (u 0.05 mL), result
// 2.00 mg/L with u(c) = 0.05 mg/L, LOD 0.1 mg/L:
//
//	w = 2.00 mg/L × 0.050 L / 2.5 g = 0.04 mg/g = 40 mg/kg
//	u(w)/w = sqrt(0.025² + 0.001² + 0.0004²) = sqrt(6.2616e-4) = 0.02502319
//	u(w) = 1.0009275 mg/kg; LOD 0.1 × 0.05/2.5 mg/g = 2 mg/kg
//
// reported "40.0" (u 1.0 to two figures, GUM §7.2.6).
func TestConvertFraction(t *testing.T) {
	b, err := ParseBasis("mg/kg")
	if err != nil {
		t.Fatal(err)
	}
	p := &Prep{Mass: 2.5, UMass: 0.001, Volume: 0.050, UVolume: 0.00005}
	v, err := b.Convert(2.00, 0.05, 0.1, 0.3, "mg/L", 0, p)
	if err != nil {
		t.Fatal(err)
	}
	near.Rel(t, "w", v.V, 40, 1e-12)
	near.Rel(t, "u(w)", v.U, 1.0009275, 1e-7)
	near.Rel(t, "LOD", v.LOD, 2, 1e-12)
	near.Rel(t, "LOQ", v.LOQ, 6, 1e-12)
	if got := CertText(v.V, v.U, v.LOD, v.LOQ); got != "40.0" {
		t.Errorf("reported %q, want 40.0", got)
	}
	// The same in % w/w: 40 mg/kg = 0.004 %.
	pc, _ := ParseBasis("% w/w")
	v2, _ := pc.Convert(2.00, 0.05, 0.1, 0.3, "µg/mL", 0, p)
	near.Rel(t, "w %", v2.V, 0.004, 1e-12)
	near.Rel(t, "u(w) %", v2.U, 1.0009275e-4, 1e-7)
	// c = 0 keeps its uncertainty: u(w) = V/m u(c) = 0.02 × 0.05 mg/g.
	v3, _ := b.Convert(0, 0.05, 0.1, 0.3, "mg/L", 0, p)
	near.Rel(t, "u(w) at c = 0", v3.U, 1, 1e-12)
}

func TestConvertConcentration(t *testing.T) {
	b, err := ParseBasis("ug/L")
	if err != nil || b.Fraction {
		t.Fatalf("ParseBasis(ug/L) = %+v, %v", b, err)
	}
	v, err := b.Convert(2.00, 0.05, 0.1, 0.3, "mg/L", 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if v.V != 2000 || v.U != 50 || v.LOD != 100 || v.LOQ != 300 {
		t.Errorf("2 ± 0.05 mg/L in µg/L = %+v, want 2000 ± 50, LOD 100, LOQ 300", v)
	}
}

func TestConvertErrors(t *testing.T) {
	b, _ := ParseBasis("mg/kg")
	if _, err := b.Convert(1, 0.1, 0, 0, "mg/L", 0, nil); err == nil || !strings.Contains(err.Error(), "mass and volume") {
		t.Errorf("no preparation: err %v, want one asking for mass and volume", err)
	}
	p := &Prep{Mass: 1, Volume: 0.1}
	if _, err := b.Convert(1, 0.1, 0, 0, "µM", 0, p); !errors.Is(err, units.ErrIncompatible) {
		t.Errorf("molar results, no molar mass: err %v, want units.ErrIncompatible", err)
	}
	if _, err := b.Convert(1, 0.1, 0, 0, "absorbance units", 0, p); !errors.Is(err, units.ErrIncompatible) {
		t.Errorf("unknown unit: err %v, want units.ErrIncompatible", err)
	}
	if err := b.Check("dye", "µM", 0); !errors.Is(err, units.ErrIncompatible) || !strings.Contains(err.Error(), `compound "dye" in "µM" cannot be reported as mg/kg`) {
		t.Errorf("Check(dye, µM): err %v", err)
	}
	if err := b.Check("dye", "mg/L", 0); err != nil {
		t.Errorf("Check(dye, mg/L): %v", err)
	}
	if _, err := ParseBasis("furlongs"); err == nil {
		t.Error("ParseBasis(furlongs): no error")
	}
	v, err := b.Convert(1, 0.1, 0, 0, "µM", 500, p) // 1 µmol/L × 500 g/mol = 0.5 mg/L; × 0.1 L / 1 g = 0.05 mg/g
	if err != nil || math.Abs(v.V-50) > 1e-9 {
		t.Errorf("1 µM, M = 500 g/mol, 1 g in 100 mL = %g mg/kg (%v), want 50", v.V, err)
	}
}
