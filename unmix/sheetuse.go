package unmix

import (
	"sync"

	"huesolve/spectrum"
)

// SheetUse looks samples up in a sample sheet while a batch runs and
// remembers which rows matched a sample and which samples the sheet does
// not name, so that a caller can report both afterwards (a typing error
// in the sheet or a file name, most often). It is safe for concurrent
// use, as Batch.Factors is called from the workers. With a nil sheet it
// matches nothing and records nothing.
type SheetUse struct {
	sheet     *SampleSheet
	mu        sync.Mutex
	used      map[string]bool
	defaulted []string
	rowOf     map[string]string // a scan's source (Source.String()) -> its row
}

// NewSheetUse returns a SheetUse of ss (nil: no sheet).
func NewSheetUse(ss *SampleSheet) *SheetUse {
	return &SheetUse{sheet: ss, used: map[string]bool{}, rowOf: map[string]string{}}
}

// Factors returns the sheet's factors of s (zero fields: defaults) and
// records the row that matched, or s as a sample the sheet does not name
// (then NotInSheet is set, so that the result is flagged).
func (u *SheetUse) Factors(s *spectrum.Spectrum) Factors {
	if u.sheet == nil {
		return Factors{}
	}
	f, row, ok := u.sheet.match(s)
	u.mu.Lock()
	defer u.mu.Unlock()
	if ok {
		u.used[row] = true
		u.rowOf[s.Source.String()] = row
	} else {
		name := s.Name
		if name == "" {
			name = s.Source.String()
		}
		u.defaulted = append(u.defaulted, name)
		f.NotInSheet = true
	}
	return f
}

// Defaulted returns the samples looked up that the sheet does not name
// (their names, or their source when unnamed), in lookup order.
func (u *SheetUse) Defaulted() []string {
	u.mu.Lock()
	defer u.mu.Unlock()
	return append([]string(nil), u.defaulted...)
}

// Unused returns the sheet's sample names that matched no sample looked
// up, in sheet order.
func (u *SheetUse) Unused() []string {
	u.mu.Lock()
	defer u.mu.Unlock()
	var unused []string
	for _, n := range u.sheet.names() {
		if !u.used[n] {
			unused = append(unused, n)
		}
	}
	return unused
}

// Row returns the sheet's sample name of the row that matched the scan
// whose source (spectrum.Source.String(), a Result's Source) is source,
// and whether one did.
func (u *SheetUse) Row(source string) (string, bool) {
	u.mu.Lock()
	defer u.mu.Unlock()
	r, ok := u.rowOf[source]
	return r, ok
}
