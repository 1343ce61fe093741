package reference

import "encoding/hex"

// Interferent is the scan of a coloured substance present in samples but
// not quantified, stored with the set (calibrate --interferent): solve
// and verify fit it in every sample with a free non-negative amount in
// units of this scan, as they do a scan given with --interferent.
type Interferent struct {
	// Name names it in results (the scan file's base name).
	Name string `json:"name"`
	// File is the scan file as given to calibrate; SHA256 the SHA-256
	// of its bytes.
	File   string `json:"file"`
	SHA256 string `json:"sha256"`
	// Grid and Absorbance are the scan, converted to absorbance, on its
	// own strictly increasing grid.
	Grid       []float64 `json:"grid_nm"`
	Absorbance []float64 `json:"absorbance"`
}

// validateInterferents checks the stored interferents: names present,
// safe on a terminal and distinct; SHA-256 in hex; the scan on a finite,
// strictly increasing grid within MinGridNM-MaxGridNM with a finite
// absorbance within +-MaxCeiling at each point (no UV-Vis reading lies
// outside).
func (s *Set) validateInterferents() error {
	seen := map[string]bool{}
	for i, it := range s.Interferents {
		if it.Name == "" {
			return invalid("interferent %d has no name", i+1)
		}
		if f := TextFault(it.Name); f != "" {
			return invalid("interferent %d: name %q %s", i+1, it.Name, f)
		}
		if seen[it.Name] {
			return invalid("interferent %q appears twice", it.Name)
		}
		seen[it.Name] = true
		if b, err := hex.DecodeString(it.SHA256); err != nil || len(b) != 32 {
			return invalid("interferent %q: sha256 %q is not a SHA-256 in hex", it.Name, it.SHA256)
		}
		if len(it.Grid) < 2 || len(it.Absorbance) != len(it.Grid) {
			return invalid("interferent %q: %d absorbances on %d wavelengths (want at least 2, one per wavelength)", it.Name, len(it.Absorbance), len(it.Grid))
		}
		for j, w := range it.Grid {
			if !finite(w) || j > 0 && w <= it.Grid[j-1] || w < MinGridNM || w > MaxGridNM {
				return invalid("interferent %q: grid_nm point %d (%g nm) is not finite, strictly increasing and within %g-%g nm", it.Name, j+1, w, float64(MinGridNM), float64(MaxGridNM))
			}
			if a := it.Absorbance[j]; !finite(a) || a < -MaxCeiling || a > MaxCeiling {
				return invalid("interferent %q: absorbance %g at %g nm is outside %g to %g", it.Name, a, w, -float64(MaxCeiling), float64(MaxCeiling))
			}
		}
	}
	return nil
}

// FileSchema is the schema the set is written as (Save, Encode): the
// lowest that holds its optional fields, for a set built in memory.
func (s *Set) FileSchema() int { return s.schemaOf() }
