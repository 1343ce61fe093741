package reference

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/baseline"
)

// withChecksum returns data with its top-level "checksum" replaced by the
// checksum of the set it decodes to, so that a fuzzed file gets past the
// checksum to the structure and the range checks; data unchanged when it
// is not a JSON object or not a set.
func withChecksum(data []byte) []byte {
	var top map[string]json.RawMessage
	if json.Unmarshal(data, &top) != nil || top == nil {
		return data
	}
	var s Set
	if json.Unmarshal(data, &s) != nil {
		return data
	}
	sum, err := s.computeChecksum()
	if err != nil {
		return data
	}
	for k := range top {
		if strings.EqualFold(k, "checksum") {
			delete(top, k)
		}
	}
	top["checksum"], _ = json.Marshal(sum)
	out, err := json.Marshal(top)
	if err != nil {
		return data
	}
	return out
}

// fuzzSeedSets are the sets the loader's fuzz target starts from: the
// test set, with a pre-treatment and a band test, and with two compounds
// and no intercept.
func fuzzSeedSets() []*Set {
	a := memSet()
	b := memSet()
	b.Pretreat = []baseline.Step{{Kind: "zero", Lo: 403, Hi: 404.5}, {Kind: "als", Lambda: 100, P: 0.01}}
	b.Compounds[0].Linearity.Band = &BandLinearity{LoNM: 400, HiNM: 403, Wavelengths: 3, MinR2: 0.99, MinR2NM: 403,
		Tested: 3, Curved: 1, PeakNeighboursTested: 2, PeakNeighboursCurved: 1}
	b.Compounds[0].Linearity.Curved = true
	b.Compounds[0].Flags = []Flag{FlagCurved, FlagFewLevels}
	c := memSet()
	c.Intercept = false
	c.Compounds[0].Intercept = nil
	d := c.Compounds[0]
	d.Name, d.Unit, d.Flags = "=dye B", "", nil
	d.Absorptivity = []float64{0.5, 0.25, 0, -0.01}
	c.Compounds = append(c.Compounds, d)
	c.Provenance.Standards[0].Conc = []float64{1, 2}
	return []*Set{a, b, c}
}

// FuzzLoadSet: Load (its decode step) never panics on any file; its errors wrap one of the
// package's causes; a set it accepts passes Validate, has a finite,
// positive noise model everywhere and encodes to a file it takes again.
func FuzzLoadSet(f *testing.F) {
	dir := f.TempDir()
	for i, s := range fuzzSeedSets() {
		p := filepath.Join(dir, "seed.json")
		if err := s.Save(p); err != nil {
			f.Fatalf("seed %d: %v", i, err)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Add([]byte(`{"schema": 1, "grid_nm": [400, 401], "compounds": [{"name": "x", "absorptivity": [1, 2]}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		// decode is Load without the file: no write per input, so the
		// fuzzer runs at full speed (Load's file handling has its own tests).
		s, err := decode(withChecksum(data))
		if err != nil {
			for _, cause := range []error{errTruncated, errChecksum, errNewerSchema, errNotSet, errInvalid} {
				if errors.Is(err, cause) {
					return
				}
			}
			t.Fatalf("decode error %v wraps none of the package's causes", err)
		}
		if err := s.Validate(); err != nil {
			t.Fatalf("decode accepted a set Validate refuses: %v", err)
		}
		_ = s.Summary()
		for i := range s.Grid {
			if sg := s.Sigma(i, s.Ceiling); !(sg > 0) || math.IsInf(sg, 0) {
				t.Fatalf("noise sigma at %g nm is %v", s.Grid[i], sg)
			}
		}
		// Encode is what Save writes (Save adds only the atomic, synced
		// file write, too slow to repeat for every input).
		again, err := s.Encode()
		if err != nil {
			t.Fatalf("a loaded set does not encode: %v", err)
		}
		if _, err := decode(again); err != nil {
			t.Fatalf("a loaded and encoded set does not decode again: %v", err)
		}
	})
}
