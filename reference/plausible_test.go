package reference

import (
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/baseline"
)

// writeTampered writes s as Save would, with its checksum recomputed but
// without Save's checks: a set edited by someone who knows the format.
func writeTampered(t *testing.T, s *Set, path string) {
	t.Helper()
	s.Schema = SchemaVersion
	sum, err := s.computeChecksum()
	if err != nil {
		t.Fatal(err)
	}
	s.Checksum = sum
	b, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLoadRefusesImplausible: a set tampered in one field, with its
// checksum recomputed, is refused by Load with a message naming the
// field, the compound (where there is one) and the value. Before the
// range checks every one of these loaded without complaint.
func TestLoadRefusesImplausible(t *testing.T) {
	sg := func(w, o int) baseline.Step {
		st, err := baseline.ParseStep("sg:5,2")
		if err != nil {
			t.Fatal(err)
		}
		st.Window, st.Order = w, o
		return st
	}
	cases := []struct {
		name string
		edit func(s *Set)
		says []string // all in the message
	}{
		{"ceiling 1e308", func(s *Set) { s.Ceiling = 1e308 }, []string{"ceiling 1e+308", "0-10"}},
		{"ceiling 11", func(s *Set) { s.Ceiling = 11 }, []string{"ceiling 11"}},
		{"ceiling 0", func(s *Set) { s.Ceiling = 0 }, []string{"ceiling is 0"}},
		{"noise 1e308", func(s *Set) { s.Noise[1] = 1e308 }, []string{"noise 1e+308 at 401.5 nm"}},
		{"negative noise", func(s *Set) { s.Noise[0] = -0.001 }, []string{"noise -0.001 at 400 nm"}},
		{"no noise", func(s *Set) { s.Noise = nil }, []string{"noise: 0 values for 4 wavelengths"}},
		{"path", func(s *Set) { s.PathCM = 1e9 }, []string{"path_cm 1e+09"}},
		{"max standard 0", func(s *Set) { s.Compounds[0].MaxStandard = 0 }, []string{`"dye A"`, "max_standard 0"}},
		{"standards not recorded", func(s *Set) { s.Compounds[0].MinStandard, s.Compounds[0].MaxStandard = 0, 0 }, []string{`"dye A"`, "min_standard 0"}},
		{"min above max", func(s *Set) { s.Compounds[0].MinStandard = 20 }, []string{`"dye A"`, "min_standard 20", "max_standard 10"}},
		{"negative SE", func(s *Set) { s.Compounds[0].SE[2] = -3e-4 }, []string{`"dye A"`, "absorptivity_se -0.0003 at 403 nm"}},
		{"peak 9999", func(s *Set) { s.Compounds[0].PeakNM = 9999 }, []string{`"dye A"`, "peak_nm 9999", "400-404.5 nm"}},
		{"peak 0", func(s *Set) { s.Compounds[0].PeakNM = 0 }, []string{`"dye A"`, "peak_nm 0"}},
		{"R2 5", func(s *Set) { s.Compounds[0].Linearity.R2 = 5 }, []string{`"dye A"`, "r2 5"}},
		{"R2 negative", func(s *Set) { s.Compounds[0].Linearity.R2 = -0.5 }, []string{`"dye A"`, "r2 -0.5"}},
		{"negative slope SE", func(s *Set) { s.Compounds[0].Linearity.SlopeSE = -1 }, []string{`"dye A"`, "slope_se -1"}},
		{"P above 1", func(s *Set) { s.Compounds[0].Linearity.MandelP = 2 }, []string{`"dye A"`, "mandel_p 2"}},
		{"range", func(s *Set) { s.Compounds[0].Linearity.RangeHi = 0.5 }, []string{`"dye A"`, "range_hi 0.5"}},
		{"levels", func(s *Set) { s.Compounds[0].Linearity.Levels = 9 }, []string{`"dye A"`, "levels 9 and points 5"}},
		{"band R2", func(s *Set) {
			s.Compounds[0].Linearity.Band = &BandLinearity{LoNM: 400, HiNM: 403, MinR2: 5, MinR2NM: 401.5, Wavelengths: 3}
		}, []string{`"dye A"`, "lowest R² 5 at 401.5 nm"}},
		{"band outside grid", func(s *Set) {
			s.Compounds[0].Linearity.Band = &BandLinearity{LoNM: 9000, HiNM: 9001, MinR2: 0.9, MinR2NM: 9000, Wavelengths: 2}
		}, []string{`"dye A"`, "band 9000-9001 nm"}},
		{"unknown flag", func(s *Set) { s.Compounds[0].Flags = []Flag{"bogus"} }, []string{`"dye A"`, `unknown flag "bogus"`}},
		{"ANSI escape in name", func(s *Set) { s.Compounds[0].Name = "\x1b[31mred" }, []string{`"\x1b[31mred"`, "U+001B"}},
		{"newline in name", func(s *Set) { s.Compounds[0].Name = "dye\nA" }, []string{`"dye\nA"`, "U+000A"}},
		{"bidi override in name", func(s *Set) { s.Compounds[0].Name = "dye \u202eA" }, []string{"U+202E"}},
		{"control in unit", func(s *Set) { s.Compounds[0].Unit = "mg/L\r" }, []string{`"dye A"`, `unit "mg/L\r"`}},
		{"empty name", func(s *Set) { s.Compounds[0].Name = "" }, []string{"a compound has no name"}},
		{"duplicate name", func(s *Set) { s.Compounds = append(s.Compounds, s.Compounds[0]) }, []string{`"dye A" appears twice`}},
		{"grid in µm", func(s *Set) { s.Grid = []float64{0.4, 0.4015, 0.403, 0.4045} }, []string{"grid_nm point 1 (0.4 nm)", "100-3500 nm"}},
		{"grid not increasing", func(s *Set) { s.Grid[2] = 401.5 }, []string{"grid_nm", "point 3 (401.5 nm)"}},
		{"bad step", func(s *Set) { s.Pretreat = []baseline.Step{sg(4, 2)} }, []string{"pretreat step 1", "window 4"}},
		{"step too long for the grid", func(s *Set) { s.Pretreat = []baseline.Step{sg(5, 2)} }, []string{"pretreat", "longer than the spectrum"}},
		{"zeroing outside the grid", func(s *Set) { s.Pretreat = []baseline.Step{{Kind: "zero", Lo: 700, Hi: 750}} }, []string{"pretreat", "no grid points"}},
		{"negative data conc", func(s *Set) { s.Compounds[0].Linearity.Data[0].Conc = -1 }, []string{`"dye A"`, "conc -1"}},
	}
	dir := t.TempDir()
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := memSet()
			c.edit(s)
			p := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "-")+".json")
			writeTampered(t, s, p)
			_, err := Load(p)
			if !errors.Is(err, errInvalid) {
				t.Fatalf("Load = %v, want errInvalid", err)
			}
			for _, w := range append(c.says, p) {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not say %q", err, w)
				}
			}
			if err := s.Save(filepath.Join(dir, "again.json")); !errors.Is(err, errInvalid) {
				t.Errorf("Save = %v, want errInvalid", err)
			}
		})
	}
}

// TestLoadTakesPlausible: what the range checks allow still loads: a
// name that a spreadsheet would read as a formula (report's CSV writers
// protect it), a unit with non-ASCII letters, an R² a rounding step below
// 0, no optional statistics and the highest ceiling.
func TestLoadTakesPlausible(t *testing.T) {
	s := memSet()
	s.Compounds[0].Name = "=cmd|' /C calc'!A0"
	s.Compounds[0].Unit = "µmol/L"
	s.Compounds[0].Linearity.R2 = -1e-15
	s.Compounds[0].Linearity.MandelF, s.Compounds[0].Linearity.MandelP = 0, 1
	s.Ceiling = MaxCeiling
	s.Pretreat = []baseline.Step{{Kind: "zero", Lo: 403, Hi: 404.5}}
	p := filepath.Join(t.TempDir(), "ok.json")
	if err := s.Save(p); err != nil {
		t.Fatal(err)
	}
	if got, err := Load(p); err != nil || got.Compounds[0].Name != s.Compounds[0].Name {
		t.Fatalf("Load = %v", err)
	}
}
