package demo

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"

	"huesolve/spectrum"
)

func TestWriteIsDeterministic(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	wa, err := New().Write(a)
	if err != nil {
		t.Fatal(err)
	}
	wb, err := New().Write(b)
	if err != nil {
		t.Fatal(err)
	}
	if len(wa) != len(wb) || len(wa) == 0 {
		t.Fatalf("wrote %d and %d files", len(wa), len(wb))
	}
	for i, rel := range wa {
		if wb[i] != rel {
			t.Fatalf("file %d: %s and %s", i, rel, wb[i])
		}
		da, err := os.ReadFile(filepath.Join(a, rel))
		if err != nil {
			t.Fatal(err)
		}
		db, err := os.ReadFile(filepath.Join(b, rel))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(da, db) {
			t.Errorf("%s differs between two runs", rel)
		}
	}
}

// TestWriteCoversEverySheetEntry checks that every file a sheet names was
// written.
func TestWriteCoversEverySheetEntry(t *testing.T) {
	dir := t.TempDir()
	sc := New()
	if _, err := sc.Write(dir); err != nil {
		t.Fatal(err)
	}
	for _, group := range [][]Scan{sc.Standards, sc.Checks, sc.Samples} {
		for _, s := range group {
			if _, err := os.Stat(filepath.Join(dir, s.file)); err != nil {
				t.Errorf("%s: %v", s.Name, err)
			}
		}
	}
	for _, f := range []string{StandardsSheet, ChecksSheet, SampleSheet, RunSheet, TruthFile} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Error(err)
		}
	}
}

// TestMeasureNoiseFree checks the scan model without noise, offsets or
// stray light against the additive Beer-Lambert law A = b·Σ ε_k c_k / d
// plus the product-base background.
func TestMeasureNoiseFree(t *testing.T) {
	sc := New()
	sc.noiseFloor, sc.noiseT, sc.offsetSD, sc.strayLight = 0, 0, 0, 0
	s := Scan{Name: "x", Conc: []float64{3, 5, 7, 1}, Dilution: 2, pathCM: 0.5}
	got := sc.measure(&s)
	for i, nm := range sc.grid {
		var want float64
		for k, d := range sc.Dyes {
			want += d.absorptivity(nm) * s.Conc[k]
		}
		want = want*0.5/2 + 0.5*sc.background(nm)
		// measure goes through T = 10^-A and back: a few ulps.
		if math.Abs(got[i]-want) > 1e-12 {
			t.Fatalf("A(%g nm) = %g, want %g", nm, got[i], want)
		}
	}
}

// TestMeasureNoise checks that a blank's scatter about its true value has
// the noise floor as its standard deviation (chi-square bounds for 401
// points: the SD estimate lies within ±12 % with probability above 0.99).
func TestMeasureNoise(t *testing.T) {
	sc := New()
	sc.offsetSD = 0
	blank := sc.Standards[0]
	got := sc.measure(&blank)
	var ss float64
	for i, nm := range sc.grid {
		d := got[i] - sc.trueAbsorbance(&blank, nm)
		ss += d * d
	}
	sd := math.Sqrt(ss / float64(len(got)))
	if math.Abs(sd/sc.noiseFloor-1) > 0.12 {
		t.Errorf("blank noise SD = %g, want about %g", sd, sc.noiseFloor)
	}
}

// TestScenarioShape checks the promises the demo makes: five or more
// levels per dye with replicates, the troubled samples present, and the
// too-concentrated one reading above 2.5 while the others stay well below.
func TestScenarioShape(t *testing.T) {
	sc := New()
	for k, d := range sc.Dyes {
		count := map[float64]int{}
		for _, s := range sc.Standards {
			nonzero := 0
			for _, c := range s.Conc {
				if c != 0 {
					nonzero++
				}
			}
			if nonzero == 1 && s.Conc[k] != 0 {
				count[s.Conc[k]]++
			}
		}
		if len(count) < 5 {
			t.Errorf("%s: %d levels, want 5 or more", d.Name, len(count))
		}
		for lv, n := range count {
			if n < 2 {
				t.Errorf("%s at %g: %d replicate(s)", d.Name, lv, n)
			}
		}
	}
	peak := func(s *Scan) float64 {
		m := 0.0
		for _, nm := range sc.grid {
			m = max(m, sc.trueAbsorbance(s, nm))
		}
		return m
	}
	seen := map[Trouble]bool{}
	for i := range sc.Samples {
		s := &sc.Samples[i]
		seen[s.Trouble] = true
		p := peak(s)
		switch s.Trouble {
		case TooStrong:
			if p < 2.5 {
				t.Errorf("%s peaks at A = %.2f, want above 2.5", s.Name, p)
			}
		case NearLimit:
			if p > 0.05 {
				t.Errorf("%s peaks at A = %.3f, want a trace", s.Name, p)
			}
		default:
			if p > 1.5 {
				t.Errorf("%s peaks at A = %.2f, want below 1.5", s.Name, p)
			}
		}
	}
	for _, tr := range []Trouble{Normal, NearLimit, TooStrong, Turbid, UnlistedDye} {
		if !seen[tr] {
			t.Errorf("no sample with trouble %q", tr)
		}
	}
}

// TestFilesReadBack reads every scan the scenario wrote with the spectrum
// readers and compares it with the model's readings, within the rounding
// of the written numbers.
func TestFilesReadBack(t *testing.T) {
	dir := t.TempDir()
	sc := New()
	if _, err := sc.Write(dir); err != nil {
		t.Fatal(err)
	}
	for _, group := range [][]Scan{sc.Standards, sc.Checks, {sc.blank}, sc.Samples} {
		for i := range group {
			s := &group[i]
			ss, err := spectrum.ReadFile(filepath.Join(dir, s.file), spectrum.ReadOptions{
				Warn: func(msg string) { t.Errorf("%s: warning: %s", s.Name, msg) }})
			if err != nil {
				t.Fatalf("%s: %v", s.Name, err)
			}
			var got *spectrum.Spectrum
			for _, x := range ss {
				if s.column == "" || x.Name == s.column {
					got = x
				}
			}
			if got == nil {
				t.Fatalf("%s: no spectrum named %q in %s", s.Name, s.column, s.file)
			}
			if err := got.ToAbsorbance(); err != nil {
				t.Fatal(err)
			}
			want := sc.measure(s)
			if !spectrum.SameGrid(got.Wavelengths, sc.grid) {
				t.Fatalf("%s: grid %g-%g nm, %d points", s.Name, got.Wavelengths[0], got.Wavelengths[len(got.Wavelengths)-1], got.Len())
			}
			for k := range want {
				// Rounding: 5e-6 A; %T to 1e-4 of a value near 100·10^-A
				// gives dA = 0.434·5e-5/%T.
				tol := 5.1e-6
				if s.form == percentT {
					tol = log10e * 0.5 / pctTDigits / (100 * math.Pow(10, -want[k])) * 1.01
				}
				if d := math.Abs(got.Values[k] - want[k]); d > tol {
					t.Fatalf("%s at %g nm: read %g, model %g", s.Name, sc.grid[k], got.Values[k], want[k])
				}
			}
		}
	}
}

// The day's run: every preparation's scan is written and named in the
// run sheet with its mass, and its extract holds content × mass / volume
// (less a planted loss).
func TestRunPreparations(t *testing.T) {
	dir := t.TempDir()
	sc := New()
	if _, err := sc.Write(dir); err != nil {
		t.Fatal(err)
	}
	sheet, err := os.ReadFile(filepath.Join(dir, RunSheet))
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range sc.Lots {
		if len(l.Preps) != 3 {
			t.Errorf("%s: %d preparations, want 3", l.Name, len(l.Preps))
		}
		for _, p := range l.Preps {
			if _, err := os.Stat(filepath.Join(dir, p.file)); err != nil {
				t.Error(err)
			}
			if !bytes.Contains(sheet, []byte(","+p.file+",,")) || !bytes.Contains(sheet, []byte(","+p.Name+","+l.Name+","+num(p.MassG)+",g,")) {
				t.Errorf("run sheet lacks %s", p.Name)
			}
			for k, c := range l.Content {
				// 1 mg/kg × 1 g / 1 mL is 1 mg/L.
				if want := c * p.MassG / p.VolumeML * (1 - p.Loss); math.Abs(p.Conc[k]-want) > 1e-12 {
					t.Errorf("%s: dye %d at %g mg/L, want %g", p.Name, k, p.Conc[k], want)
				}
			}
		}
	}
}

// The invented history: working days only, the same on every call, each
// series' baseline at mean 100 % and SD historyNoisePct, and the shift
// on the shifted dye alone.
func TestHistory(t *testing.T) {
	sc := New()
	a, b := sc.History(), New().History()
	if len(a) != HistoryDays || fmt.Sprint(a) != fmt.Sprint(b) {
		t.Fatalf("%d days, repeatable %v", len(a), fmt.Sprint(a) == fmt.Sprint(b))
	}
	series := map[string][]float64{}
	for _, d := range a {
		if wd := d.Time.Weekday(); wd == time.Saturday || wd == time.Sunday {
			t.Errorf("run on a %s", wd)
		}
		for _, c := range d.Checks {
			series[c.Compound+" "+c.Standard] = append(series[c.Compound+" "+c.Standard], c.Recovery)
		}
	}
	if len(series) != 10 {
		t.Errorf("%d series, want 10 (every dye each check holds)", len(series))
	}
	for name, s := range series {
		mean, sd := stat.MeanStdDev(s[:HistoryBaseline], nil)
		if math.Abs(mean-100) > 0.01 || math.Abs(sd-historyNoisePct) > 0.01 {
			t.Errorf("%s: baseline mean %g, SD %g", name, mean, sd)
		}
		late := stat.Mean(s[HistoryShiftDay-1:], nil)
		if shifted := strings.HasPrefix(name, ShiftedDye+" "); shifted != (late-100 > historyShiftPct/2) {
			t.Errorf("%s: mean after the shift day %g", name, late)
		}
	}
}
