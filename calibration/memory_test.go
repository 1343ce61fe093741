package calibration

import (
	"fmt"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// maxBytesPerRow bounds what ReadSheet and Build allocate in all per
// standard row added (401-point scans, one compound, rows naming a few
// scan files again and again, as a pasted sheet does): an upper bound of
// their peak memory per row, since nothing allocated is counted twice.
// Measured 45.5 KB before rows naming one scan shared its converted copy
// and the grid check stopped copying every scan; 31.8 KB after (most of
// it short-lived: the per-wavelength line fits); limit 40 KB. With
// MaxSheetRows rows that bounds the footprint at about 800 MB.
const maxBytesPerRow = 40 << 10

// allocFor returns the bytes ReadSheet and Build allocate on a sheet of n
// rows in dir.
func allocFor(t *testing.T, dir string, n int) uint64 {
	t.Helper()
	var b strings.Builder
	b.WriteString("scan,dye (mg/L)\nblank.csv,0\n")
	for i := range n - 1 {
		c := 1 + i%8
		fmt.Fprintf(&b, "s%d.csv,%d\n", c, c)
	}
	path := writeSheet(t, dir, fmt.Sprintf("sheet%d.csv", n), b.String())
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	sh, err := ReadSheet(path, SheetOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Build(sh, Options{MinR2: -1, MaxRelSD: -1}); err != nil {
		t.Fatal(err)
	}
	runtime.ReadMemStats(&after)
	return after.TotalAlloc - before.TotalAlloc
}

// TestBuildMemoryPerRow states calibrate's memory per standard row: the
// bytes ReadSheet and Build allocate per row added (the difference
// between 3000 and 1000 rows, so fixed costs cancel), a bound on the
// peak, must stay under maxBytesPerRow.
func TestBuildMemoryPerRow(t *testing.T) {
	if testing.Short() {
		t.Skip("builds two large sheets")
	}
	dir := t.TempDir()
	wl := linGrid(350, 1, 401)
	shape := band(wl, 500, 30, 0.05)
	writeScan(t, filepath.Join(dir, "blank.csv"), wl, make([]float64, len(wl)))
	for c := 1; c <= 8; c++ {
		v := scale(append([]float64(nil), shape...), float64(c))
		for j := range v {
			v[j] += 1e-4 * float64((j*c)%7-3) // invented noise, fixed
		}
		writeScan(t, filepath.Join(dir, fmt.Sprintf("s%d.csv", c)), wl, v)
	}
	small, large := allocFor(t, dir, 1000), allocFor(t, dir, 3000)
	per := float64(large-small) / 2000
	t.Logf("calibrate allocates %.0f bytes per standard row (401-point scans)", per)
	if per > maxBytesPerRow {
		t.Errorf("%.0f bytes per standard row, limit %d", per, maxBytesPerRow)
	}
}

// TestReadSheetRowCap: a sheet of more than MaxSheetRows rows is refused
// before any scan is read, naming the line.
func TestReadSheetRowCap(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("scan,dye (mg/L)\n")
	for i := range MaxSheetRows + 1 {
		fmt.Fprintf(&b, "missing.csv,%d\n", 1+i%5)
	}
	_, err := ReadSheet(writeSheet(t, dir, "big.csv", b.String()), SheetOptions{})
	if err == nil || !strings.Contains(err.Error(), fmt.Sprintf(":%d: ", MaxSheetRows+2)) || !strings.Contains(err.Error(), "more than 20000 rows") {
		t.Fatalf("a sheet of %d rows: %v", MaxSheetRows+1, err)
	}
}
