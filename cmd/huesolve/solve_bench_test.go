package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"huesolve/reference"
	"huesolve/spectrum"
)

// The wide-table benchmark: 20,000 invented scans x 401 wavelengths
// (about 70 MB of text), 4 compounds, offset baseline. It is generated in
// a temporary folder on first use and never committed.
const (
	wideScans = 20000
	wideLo    = 350.0
	wideHi    = 750.0
)

// wideInput writes refs.json and wide.csv (rows: wavelengths, columns:
// scans) into a temporary folder removed when b ends.
func wideInput(b *testing.B) (ref, table string) {
	b.Helper()
	wideDir := b.TempDir()
	var wideErr error
	func() {
		g := benchGrid()
		if wideErr = benchRefs(filepath.Join(wideDir, "refs.json"), g); wideErr != nil {
			return
		}
		rng := rand.New(rand.NewPCG(1, 1))
		conc := make([][4]float64, wideScans)
		for j := range conc {
			for k := range 4 {
				conc[j][k] = 10 * rng.Float64()
			}
		}
		f, err := os.Create(filepath.Join(wideDir, "wide.csv"))
		if err != nil {
			wideErr = err
			return
		}
		w := bufio.NewWriterSize(f, 1<<20)
		w.WriteString("wavelength (nm)")
		for j := range wideScans {
			fmt.Fprintf(w, ",S%05d [absorbance]", j)
		}
		w.WriteByte('\n')
		buf := make([]byte, 0, 32)
		for _, l := range g {
			w.WriteString(strconv.FormatFloat(l, 'f', -1, 64))
			e := [4]float64{benchEps(0, l), benchEps(1, l), benchEps(2, l), benchEps(3, l)}
			for j := range wideScans {
				a := 0.01 + 0.002*rng.NormFloat64()
				for k := range 4 {
					a += conc[j][k] * e[k]
				}
				buf = strconv.AppendFloat(append(buf[:0], ','), a, 'f', 5, 64)
				w.Write(buf)
			}
			w.WriteByte('\n')
		}
		if err := w.Flush(); err != nil {
			wideErr = err
		}
		if err := f.Close(); err != nil && wideErr == nil {
			wideErr = err
		}
	}()
	if wideErr != nil {
		b.Fatal(wideErr)
	}
	return filepath.Join(wideDir, "refs.json"), filepath.Join(wideDir, "wide.csv")
}

// benchGrid is the benchmarks' grid: 350-750 nm at 1 nm.
func benchGrid() []float64 {
	var g []float64
	for l := wideLo; l <= wideHi; l++ {
		g = append(g, l)
	}
	return g
}

// benchPeaks are the band centres of the invented compounds, nm.
var benchPeaks = [4]float64{420, 500, 570, 640}

// benchEps is the invented absorptivity of compound k at l nm: four
// Gaussian bands.
func benchEps(k int, l float64) float64 {
	d := (l - benchPeaks[k]) / 32
	return 0.05 * math.Exp(-0.5*d*d)
}

// benchRefs writes the benchmarks' invented reference set of four
// compounds on grid g to path.
func benchRefs(path string, g []float64) error {
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: 1, Ceiling: 2,
		Provenance: reference.Provenance{Tool: "huesolve benchmark", Version: "bench", Created: "2026-01-01T00:00:00Z", Sheet: "invented"}}
	set.Noise = make([]float64, len(g))
	for i := range g {
		set.Noise[i] = 0.002
	}
	for k := range 4 {
		c := reference.Compound{Name: fmt.Sprintf("dye%d", k+1), Unit: "mg/L", MinStandard: 1, MaxStandard: 20, PeakNM: benchPeaks[k],
			Absorptivity: make([]float64, len(g)), SE: make([]float64, len(g)), Usable: make([]bool, len(g))}
		for i, l := range g {
			c.Absorptivity[i] = benchEps(k, l)
			c.Usable[i] = true
		}
		set.Compounds = append(set.Compounds, c)
	}
	return set.Save(path)
}

// heapPeak samples the live heap (runtime/metrics, which does not stop
// the world) every millisecond while f runs and returns the largest value
// seen, in MB.
func heapPeak(f func()) float64 {
	runtime.GC()
	var peak atomic.Uint64
	stop := make(chan struct{})
	done := make(chan struct{})
	go func() {
		defer close(done)
		sample := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
		t := time.NewTicker(time.Millisecond)
		defer t.Stop()
		for {
			metrics.Read(sample)
			if v := sample[0].Value.Uint64(); v > peak.Load() {
				peak.Store(v)
			}
			select {
			case <-stop:
				return
			case <-t.C:
			}
		}
	}()
	f()
	close(stop)
	<-done
	return float64(peak.Load()) / 1e6
}

// BenchmarkWideTable compares reading and parsing the 20,000-scan table
// ("parse") with the whole solve command on it ("solve", CSV written to a
// discarded stream, two workers). Metrics: seconds per run and the peak
// live heap in MB; the parsed numbers are 20,000 x 401 x 8 B = 64 MB.
func BenchmarkWideTable(b *testing.B) {
	if testing.Short() {
		b.Skip("generates a 70 MB file")
	}
	ref, table := wideInput(b)
	b.Run("parse", func(b *testing.B) {
		var peak float64
		for b.Loop() {
			peak = max(peak, heapPeak(func() {
				ss, err := spectrum.ReadFile(table, spectrum.ReadOptions{})
				if err != nil || len(ss) != wideScans {
					b.Fatalf("read: %d scans, %v", len(ss), err)
				}
				runtime.KeepAlive(ss)
			}))
		}
		b.ReportMetric(peak, "MB-peak-heap")
		b.ReportMetric(float64(b.Elapsed().Seconds())/float64(b.N), "s/run")
	})
	b.Run("solve", func(b *testing.B) {
		var peak float64
		for b.Loop() {
			var errb strings.Builder
			peak = max(peak, heapPeak(func() {
				code := Execute([]string{"solve", ref, table, "--format", "csv", "-j", "2"}, strings.NewReader(""), io.Discard, &errb)
				if code != exitOK && code != exitFlagged {
					b.Fatalf("solve: exit %d: %s", code, errb.String())
				}
			}))
		}
		b.ReportMetric(peak, "MB-peak-heap")
		b.ReportMetric(float64(b.Elapsed().Seconds())/float64(b.N), "s/run")
	})
}
