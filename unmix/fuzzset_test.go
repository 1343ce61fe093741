package unmix

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
)

// fuzzChecksum returns data with its checksum recomputed as
// reference.Set.Save computes it (SHA-256 of the compact JSON with the
// checksum empty), so that fuzzed sets reach the range checks and the
// model; data unchanged when it does not decode to a set.
func fuzzChecksum(data []byte) []byte {
	var top map[string]json.RawMessage
	var s reference.Set
	if json.Unmarshal(data, &top) != nil || top == nil || json.Unmarshal(data, &s) != nil {
		return data
	}
	s.Checksum = ""
	compact, err := json.Marshal(&s)
	if err != nil {
		return data
	}
	sum := sha256.Sum256(compact)
	delete(top, "Checksum")
	top["checksum"], _ = json.Marshal(hex.EncodeToString(sum[:]))
	out, err := json.Marshal(top)
	if err != nil {
		return data
	}
	return out
}

// FuzzModelFromSet: any set reference.Load accepts builds a model, or
// NewModel refuses it with an error, without a panic; a model solves a
// scan of its own first compound without a panic.
func FuzzModelFromSet(f *testing.F) {
	dir := f.TempDir()
	for n := 1; n <= 2; n++ {
		set := testSet(n)
		for k := range set.Compounds {
			c := &set.Compounds[k]
			c.SE = make([]float64, len(set.Grid))
			c.Usable = make([]bool, len(set.Grid))
			for i := range c.Usable {
				c.Usable[i] = true
			}
			c.PeakNM = testBands[k][0].Peak
		}
		p := filepath.Join(dir, "seed.json")
		if err := set.Save(p); err != nil {
			f.Fatal(err)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		p := filepath.Join(dir, "set.json")
		if err := os.WriteFile(p, fuzzChecksum(data), 0o644); err != nil {
			t.Fatal(err)
		}
		set, err := reference.Load(p)
		if err != nil {
			return
		}
		m, err := NewModel(set, Options{Weighted: true})
		if err != nil {
			return
		}
		v := make([]float64, len(set.Grid))
		for i := range v {
			v[i] = set.Compounds[0].Absorptivity[i] * set.PathCM
		}
		sp := &spectrum.Spectrum{Name: "fuzz", Wavelengths: set.Grid, Values: v, Quantity: spectrum.Absorbance}
		_, _ = m.Solve(sp, Factors{})
	})
}
