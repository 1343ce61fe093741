package reference

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// memSet is a small invented set for the file tests.
func memSet() *Set {
	grid := []float64{400, 401.5, 403, 404.5}
	return &Set{
		Schema: SchemaVersion,
		Grid:   grid,
		Compounds: []Compound{{
			Name: "dye A", Unit: "mg/L",
			Absorptivity: []float64{0.1, 1.0 / 3, 0.2 + 0.1, 1e-17},
			SE:           []float64{1e-4, 2e-4, 3e-4, 4e-4},
			Usable:       []bool{true, true, true, false},
			Intercept:    []float64{0.001, -0.002, 0, 0.003},
			PeakNM:       401.5, MinStandard: 1, MaxStandard: 10,
			Linearity: Linearity{Slope: 1.0 / 3, Intercept: 0.001, SlopeSE: 1e-4, InterceptSE: 1e-3,
				R2: 0.9999, ResidualSD: 0.001, Levels: 5, Points: 5,
				LackOfFitF: math.NaN(), LackOfFitP: math.NaN(), MandelF: 0.5, MandelP: 0.51,
				RangeLo: 1, RangeHi: 10, Data: []Point{{1, 0.33, true}, {10, 3.3, false}}},
			Flags: []Flag{FlagAboveCeiling},
		}},
		Noise: []float64{0.001, 0.0011, 0.0012, 0.0013}, PathCM: 1, Ceiling: 2, Intercept: true,
		Provenance: Provenance{Tool: "huesolve", Version: "test", Created: "2026-01-02T03:04:05Z", Sheet: "std.csv",
			Standards: []Standard{{File: "a.csv", SHA256: strings.Repeat("ab", 32), Conc: []float64{1}, Line: 2}}},
	}
}

func TestSaveLoadRoundTrip(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "refs.json")
	s := memSet()
	if err := s.Save(p); err != nil {
		t.Fatal(err)
	}
	got, err := Load(p)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := json.Marshal(s)
	b, _ := json.Marshal(got)
	if !bytes.Equal(a, b) {
		t.Errorf("round trip changed the set:\n%s\n%s", a, b)
	}
	// Floats come back bit for bit.
	for j, v := range s.Compounds[0].Absorptivity {
		if got.Compounds[0].Absorptivity[j] != v {
			t.Errorf("absorptivity[%d] = %v, want %v", j, got.Compounds[0].Absorptivity[j], v)
		}
	}
	l := got.Compounds[0].Linearity
	if !math.IsNaN(l.LackOfFitF) || !math.IsNaN(l.LackOfFitP) || l.MandelF != 0.5 {
		t.Errorf("test statistics after load: lof %v %v mandel %v; want NaN NaN 0.5", l.LackOfFitF, l.LackOfFitP, l.MandelF)
	}
	raw, _ := os.ReadFile(p)
	if bytes.Contains(raw, []byte("NaN")) || bytes.Contains(raw, []byte("lack_of_fit")) {
		t.Errorf("file holds NaN statistics:\n%s", raw)
	}
	// Saving again gives the same bytes (canonical content).
	p2 := filepath.Join(dir, "again.json")
	if err := got.Save(p2); err != nil {
		t.Fatal(err)
	}
	raw2, _ := os.ReadFile(p2)
	if !bytes.Equal(raw, raw2) {
		t.Error("saving a loaded set gave different bytes")
	}
}

func TestLoadRefuses(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.json")
	if err := memSet().Save(good); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		data []byte
		want error
	}{
		{"truncated", raw[:len(raw)/2], errTruncated},
		{"empty", nil, errTruncated},
		{"edited", bytes.Replace(raw, []byte(`"path_cm": 1`), []byte(`"path_cm": 2`), 1), errChecksum},
		{"edited digit", bytes.Replace(raw, []byte("0.0011"), []byte("0.0021"), 1), errChecksum},
		{"checksum altered", bytes.Replace(raw, []byte(`"checksum": "`), []byte(`"checksum": "x`), 1), errChecksum},
		{"newer schema", bytes.Replace(raw, []byte(`"schema": 1`), fmt.Appendf(nil, `"schema": %d`, SchemaVersion+1), 1), errNewerSchema},
		{"not a set", []byte(`{"grid": [1, 2]}`), errNotSet},
		{"not json", []byte("wavelength,abs\n400,0.1\n"), errNotSet},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if bytes.Equal(c.data, raw) {
				t.Fatal("the case did not change the file")
			}
			p := filepath.Join(dir, c.name+".json")
			if err := os.WriteFile(p, c.data, 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := Load(p)
			if !errors.Is(err, c.want) {
				t.Fatalf("Load(%s) = %v, want %v", c.name, err, c.want)
			}
			if !strings.Contains(err.Error(), p) {
				t.Errorf("error %q does not name the file", err)
			}
		})
	}
}

func TestSaveRefusesNaN(t *testing.T) {
	s := memSet()
	s.Noise[2] = math.NaN()
	p := filepath.Join(t.TempDir(), "bad.json")
	if err := s.Save(p); !errors.Is(err, errInvalid) {
		t.Fatalf("Save with NaN noise = %v, want errInvalid", err)
	}
	if _, err := os.Stat(p); !os.IsNotExist(err) {
		t.Errorf("a refused save left a file: %v", err)
	}
}

// TestSaveRefusesBothCurved: a line cannot be both curved (confirmed) and
// curved at its maximum only, nor have more curved neighbours of the
// band maximum than tested ones.
func TestSaveRefusesBothCurved(t *testing.T) {
	for name, edit := range map[string]func(l *Linearity){
		"both curved": func(l *Linearity) { l.Curved, l.CurvedUnconfirmed = true, true },
		"neighbour count": func(l *Linearity) {
			l.Band = &BandLinearity{Wavelengths: 3, Tested: 3, PeakNeighboursTested: 1, PeakNeighboursCurved: 2}
		},
	} {
		s := memSet()
		edit(&s.Compounds[0].Linearity)
		if err := s.Save(filepath.Join(t.TempDir(), "bad.json")); !errors.Is(err, errInvalid) {
			t.Errorf("%s: Save = %v, want errInvalid", name, err)
		}
	}
}
