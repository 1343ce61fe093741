package reference

import (
	"bytes"
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

// TestInterferentsInSet: a set with stored interferents is written as
// schema 3 and reads back whole; the same set without them is written
// byte for byte as before (schema 1); bad interferent fields are refused
// on save naming the interferent.
func TestInterferentsInSet(t *testing.T) {
	dir := t.TempDir()
	plain, err := memSet().Encode()
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(plain, []byte(`"schema": 1,`)) || bytes.Contains(plain, []byte("interferents")) {
		t.Fatalf("a set without interferents:\n%.200s", plain)
	}
	good := Interferent{Name: "haze.csv", File: "scans/haze.csv", SHA256: strings.Repeat("cd", 32),
		Grid: []float64{390, 400, 410}, Absorbance: []float64{0.1, 0.2, 0.15}}
	s := memSet()
	s.Interferents = []Interferent{good}
	p := filepath.Join(dir, "with.json")
	if err := s.Save(p); err != nil {
		t.Fatal(err)
	}
	got, err := Load(p)
	if err != nil {
		t.Fatal(err)
	}
	if got.Schema != 3 || len(got.Interferents) != 1 || got.Interferents[0].File != good.File || got.Interferents[0].Absorbance[1] != 0.2 {
		t.Errorf("read back schema %d, interferents %+v", got.Schema, got.Interferents)
	}
	bad := []struct {
		name string
		edit func(*Interferent)
		want string
	}{
		{"no name", func(it *Interferent) { it.Name = "" }, "no name"},
		{"control", func(it *Interferent) { it.Name = "a\x1bb" }, "control character"},
		{"sha", func(it *Interferent) { it.SHA256 = "xyz" }, "not a SHA-256"},
		{"lengths", func(it *Interferent) { it.Absorbance = it.Absorbance[:2] }, "2 absorbances on 3 wavelengths"},
		{"grid", func(it *Interferent) { it.Grid = []float64{390, 389, 410} }, "strictly increasing"},
		{"absorbance", func(it *Interferent) { it.Absorbance = []float64{0, 50, 0} }, "absorbance 50"},
	}
	for _, c := range bad {
		s := memSet()
		it := good
		it.Grid, it.Absorbance = append([]float64(nil), good.Grid...), append([]float64(nil), good.Absorbance...)
		c.edit(&it)
		s.Interferents = []Interferent{it}
		err := s.Save(filepath.Join(dir, "bad.json"))
		if !errors.Is(err, errInvalid) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want %q", c.name, err, c.want)
		}
	}
	s = memSet()
	s.Interferents = []Interferent{good, good}
	if err := s.Save(filepath.Join(dir, "twice.json")); err == nil || !strings.Contains(err.Error(), "appears twice") {
		t.Errorf("the same name twice: %v", err)
	}
}
