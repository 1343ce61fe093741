package reference

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestAbsorptivityCovFile: a set without absorptivity_cov is written as
// before (schema 1, no such key); one with it is schema 3 and reads back
// exactly; a schema 1 or 2 file holding it, and a damaged one, are
// refused naming the field.
func TestAbsorptivityCovFile(t *testing.T) {
	dir := t.TempDir()
	plain := memSet()
	b, err := plain.Encode()
	if err != nil {
		t.Fatal(err)
	}
	if plain.Schema != 1 || bytes.Contains(b, []byte("absorptivity_cov")) {
		t.Errorf("a set without covariance: schema %d, file mentions it: %v", plain.Schema, bytes.Contains(b, []byte("absorptivity_cov")))
	}
	s := memSet()
	s.AbsorptivityCov = &AbsorptivityCov{Unscaled: [][]float64{{0.02}, {0.5}}, Index: []int{0, 0, 1, -1}}
	p := filepath.Join(dir, "cov.json")
	if err := s.Save(p); err != nil {
		t.Fatal(err)
	}
	got, err := Load(p)
	if err != nil {
		t.Fatal(err)
	}
	if got.Schema != 3 || got.AbsorptivityCov == nil || got.AbsorptivityCov.Unscaled[1][0] != 0.5 || got.AbsorptivityCov.Index[3] != -1 {
		t.Fatalf("read back: schema %d, covariance %+v", got.Schema, got.AbsorptivityCov)
	}
	// CalVar = Noise^2 z' U z: 0.0011^2 * 0.02 * 3^2 at point 1, 0 at point 3.
	if v, want := got.CalVar(1, []float64{3}), 0.0011*0.0011*0.02*9; math.Abs(v-want) > 1e-15*want {
		t.Errorf("CalVar = %g, want %g", v, want)
	}
	if v := got.CalVar(3, []float64{3}); v != 0 {
		t.Errorf("CalVar where nothing was fitted = %g, want 0", v)
	}
	for name, edit := range map[string]func(*Set){
		"index length": func(s *Set) { s.AbsorptivityCov.Index = s.AbsorptivityCov.Index[:2] },
		"index range":  func(s *Set) { s.AbsorptivityCov.Index[0] = 2 },
		"matrix size":  func(s *Set) { s.AbsorptivityCov.Unscaled[0] = []float64{1, 2} },
		"negative":     func(s *Set) { s.AbsorptivityCov.Unscaled[1][0] = -1 },
		"old schema":   func(s *Set) {},
	} {
		bad := memSet()
		bad.AbsorptivityCov = &AbsorptivityCov{Unscaled: [][]float64{{0.02}, {0.5}}, Index: []int{0, 0, 1, -1}}
		edit(bad)
		q := filepath.Join(dir, name+".json")
		writeTampered(t, bad, q)
		if name == "old schema" {
			data, err := os.ReadFile(q)
			if err != nil {
				t.Fatal(err)
			}
			data = bytes.Replace(data, []byte(`"schema": 3`), []byte(`"schema": 2`), 1)
			bad.Schema = 2
			sum, _ := bad.computeChecksum()
			data = bytes.Replace(data, []byte(bad.Checksum), []byte(sum), 1)
			if err := os.WriteFile(q, data, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		_, err := Load(q)
		if !errors.Is(err, errInvalid) || !strings.Contains(err.Error(), "absorptivity_cov") {
			t.Errorf("%s: Load = %v, want an invalid set naming absorptivity_cov", name, err)
		}
	}
}

// TestQuad: the packed quadratic form against the full matrix.
func TestQuad(t *testing.T) {
	// U = [[4, 1, 0.5], [1, 3, -1], [0.5, -1, 2]], packed by rows.
	c := &AbsorptivityCov{Unscaled: [][]float64{{4, 1, 0.5, 3, -1, 2}}}
	full := [3][3]float64{{4, 1, 0.5}, {1, 3, -1}, {0.5, -1, 2}}
	z := []float64{1.5, -2, 0.25}
	want := 0.0
	for i := range 3 {
		for j := range 3 {
			want += z[i] * full[i][j] * z[j]
			if got := c.At(0, i, j, 3); got != full[i][j] {
				t.Errorf("At(%d, %d) = %g, want %g", i, j, got, full[i][j])
			}
		}
	}
	if got := c.Quad(0, z); math.Abs(got-want) > 1e-12 {
		t.Errorf("Quad = %g, want %g", got, want)
	}
}
