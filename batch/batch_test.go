package batch

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"sync"
	"syscall"
	"testing"

	"huesolve/spectrum"
	"huesolve/unmix"
)

// fakeFiles serves spectra from memory: file i holds n_i scans; names in
// bad fail to read.
func fakeFiles(sizes map[string]int, bad map[string]bool) func(string, spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
	return func(path string, _ spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
		if bad[path] {
			return nil, &spectrum.ParseError{File: path, Line: 3, Column: 2, Err: errors.New("not a number")}
		}
		var out []*spectrum.Spectrum
		for j := range sizes[path] {
			seed := uint64(len(path)*1000 + j)
			s := mixture{conc: []float64{5, 3, float64(j % 3), 8}, noise: testNoise, seed: seed}.spectrum()
			if j%7 == 3 {
				s.Values[10] = 2.6 // one saturated point: a second design
			}
			s.Name = fmt.Sprintf("%s#%d", filepath.Base(path), j)
			s.Source.File = path
			out = append(out, s)
		}
		return out, nil
	}
}

type record struct {
	seq    int
	file   string
	sample string
	conc   []float64
	err    string
}

func runBatch(t *testing.T, ctx context.Context, b *Batch, inputs []Input, stopAfter int) ([]record, Summary, error) {
	t.Helper()
	var got []record
	sum, err := b.Run(ctx, inputs, func(o Outcome) error {
		r := record{seq: o.Seq, file: o.File}
		if o.Err != nil {
			r.err = o.Err.Error()
		}
		if o.Result != nil {
			r.sample = o.Result.Sample
			for _, a := range o.Result.Amounts {
				r.conc = append(r.conc, a.Conc)
			}
		}
		got = append(got, r)
		if stopAfter > 0 && len(got) == stopAfter {
			return errStop
		}
		return nil
	})
	return got, sum, err
}

var errStop = errors.New("stop here")

func TestBatchOrderAndFailures(t *testing.T) {
	sizes := map[string]int{"a.csv": 1, "wide.csv": 57, "b.csv": 3, "bad.csv": 0, "c.csv": 2}
	inputs := []Input{{Path: "a.csv"}, {Path: "wide.csv"}, {Path: "bad.csv"}, {Path: "none*.csv", Err: errNoMatch}, {Path: "b.csv"}, {Path: "c.csv"}}
	var first []record
	for _, workers := range []int{1, 2, 4, 7} {
		b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: workers,
			ReadFile: fakeFiles(sizes, map[string]bool{"bad.csv": true})}
		got, sum, err := runBatch(t, context.Background(), b, inputs, 0)
		if err != nil {
			t.Fatalf("workers %d: %v", workers, err)
		}
		want := Summary{Files: 6, Unreadable: 2, Samples: 63, Solved: 63, Emitted: 65}
		if sum != want {
			t.Errorf("workers %d: summary %+v, want %+v", workers, sum, want)
		}
		for i, r := range got {
			if r.seq != i {
				t.Fatalf("workers %d: outcome %d has seq %d", workers, i, r.seq)
			}
		}
		if got[58].file != "bad.csv" || !strings.Contains(got[58].err, "bad.csv:3:2") {
			t.Errorf("workers %d: outcome 58 = %+v, want the bad file", workers, got[58])
		}
		if first == nil {
			first = got
		} else if !reflect.DeepEqual(got, first) {
			t.Errorf("workers %d: outcomes differ from workers 1", workers)
		}
	}
}

func TestBatchStops(t *testing.T) {
	sizes := map[string]int{"wide.csv": 200}
	b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: 3, ReadFile: fakeFiles(sizes, nil)}
	got, sum, err := runBatch(t, context.Background(), b, []Input{{Path: "wide.csv"}}, 10)
	if !errors.Is(err, errStop) || len(got) != 10 || sum.Emitted != 9 {
		t.Errorf("emit error: err %v, %d outcomes, emitted %d", err, len(got), sum.Emitted)
	}

	ctx, cancel := context.WithCancel(context.Background())
	n := 0
	b.Progress = func(done, known int) {
		if n++; n == 25 {
			cancel()
		}
	}
	got, sum, err = runBatch(t, ctx, b, []Input{{Path: "wide.csv"}}, 0)
	if !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: err %v", err)
	}
	if len(got) != 25 || sum.Emitted != 25 || sum.Solved != 25 {
		t.Errorf("cancelled after 25: %d outcomes, summary %+v", len(got), sum)
	}
}

func TestBatchEachAndFactors(t *testing.T) {
	sizes := map[string]int{"x.csv": 4}
	b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: 2, ReadFile: fakeFiles(sizes, nil)}
	b.Factors = func(s *spectrum.Spectrum) (unmix.Factors, error) {
		if strings.HasSuffix(s.Name, "#1") {
			return unmix.Factors{}, errors.New("no factors")
		}
		return unmix.Factors{Dilution: 2}, nil
	}
	b.Each = func(_ int, r *unmix.Result) error {
		if strings.HasSuffix(r.Sample, "#2") {
			return errors.New("plot failed")
		}
		return nil
	}
	got, sum, err := runBatch(t, context.Background(), b, []Input{{Path: "x.csv"}}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if sum.Solved != 2 || sum.Failed != 2 || got[1].err != "no factors" || got[2].err != "plot failed" || got[2].conc == nil {
		t.Errorf("summary %+v, outcomes %+v", sum, got)
	}
	if c := got[0].conc[0]; c < 9 || c > 11 {
		t.Errorf("dilution 2 not applied: %g", c)
	}
}

func TestExpandInputs(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"s2.csv", "s1.csv", ".hidden", "notes.txt"} {
		if err := os.WriteFile(filepath.Join(dir, f), []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Mkdir(filepath.Join(dir, "sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	empty := t.TempDir()
	got := ExpandInputs([]string{filepath.Join(dir, "*.csv"), dir, filepath.Join(dir, "missing.csv"), filepath.Join(dir, "z*.csv"), empty})
	var names []string
	for _, in := range got {
		s := filepath.Base(in.Path)
		if in.Err != nil {
			s += "!"
		}
		names = append(names, s)
	}
	want := []string{"s1.csv", "s2.csv", "notes.txt", "s1.csv", "s2.csv", "missing.csv", "z*.csv!", filepath.Base(empty) + "!"}
	if !reflect.DeepEqual(names, want) {
		t.Errorf("ExpandInputs = %v, want %v", names, want)
	}
}

// TestNaturalOrder: folders and patterns expand in natural order, so
// s2 comes before s10 (plain byte order would give s1, s10, s11, s2).
func TestNaturalOrder(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"s10.csv", "s2.csv", "s1.csv", "s11.csv", "blank.csv", "s02b.csv"} {
		if err := os.WriteFile(filepath.Join(dir, n), nil, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want := "blank.csv s1.csv s2.csv s02b.csv s10.csv s11.csv"
	for _, arg := range []string{dir, filepath.Join(dir, "*.csv")} {
		var got []string
		for _, in := range ExpandInputs([]string{arg}) {
			got = append(got, filepath.Base(in.Path))
		}
		if strings.Join(got, " ") != want {
			t.Errorf("%s: %v, want %s", arg, got, want)
		}
	}
	// A name before its longer variants, whatever the extension.
	names := []string{"lot-106-d5.csv", "lot-106.csv", "lot-105.jdx", "lot-106.jdx", "lot-10.csv"}
	slices.SortFunc(names, naturalCompare)
	if got, want := strings.Join(names, " "), "lot-10.csv lot-105.jdx lot-106.csv lot-106.jdx lot-106-d5.csv"; got != want {
		t.Errorf("natural order %s, want %s", got, want)
	}
	if naturalCompare("s01", "s1") == 0 || naturalCompare("a", "a") != 0 || naturalCompare("x9", "x10") >= 0 {
		t.Error("naturalCompare is not a total order as documented")
	}
}

// TestBatchCheckOnly: with CheckOnly every sample is read and checked but
// not solved; a scan that does not cover the window, one with a bad
// factor and an unreadable file are reported as solving would report
// them.
func TestBatchCheckOnly(t *testing.T) {
	sizes := map[string]int{"a.csv": 3, "b.csv": 2}
	read := fakeFiles(sizes, map[string]bool{"bad.csv": true})
	b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: 2, CheckOnly: true,
		ReadFile: func(path string, opt spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
			ss, err := read(path, opt)
			if path == "b.csv" && err == nil {
				short := ss[1].Clone()
				short.Wavelengths, short.Values = short.Wavelengths[5:], short.Values[5:]
				ss[1] = short
			}
			return ss, err
		},
		Factors: func(s *spectrum.Spectrum) (unmix.Factors, error) {
			if strings.HasSuffix(s.Name, "a.csv#2") {
				return unmix.Factors{Dilution: -1}, nil
			}
			return unmix.Factors{}, nil
		},
		Each: func(int, *unmix.Result) error { t.Error("Each called in a check-only run"); return nil },
	}
	var errs []error
	var checked []bool
	sum, err := b.Run(context.Background(), []Input{{Path: "a.csv"}, {Path: "bad.csv"}, {Path: "b.csv"}}, func(o Outcome) error {
		if o.Result != nil {
			t.Errorf("outcome %d has a result", o.Seq)
		}
		errs = append(errs, o.Err)
		checked = append(checked, o.checked)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	want := Summary{Files: 3, Unreadable: 1, Samples: 5, Checked: 3, Failed: 2, Emitted: 6}
	if sum != want {
		t.Errorf("summary %+v, want %+v", sum, want)
	}
	if !checked[0] || !checked[1] || checked[2] || !errors.Is(errs[2], unmix.ErrFactor) || checked[3] || !checked[4] || !errors.Is(errs[5], unmix.ErrCoverage) {
		t.Errorf("checked %v, errors %v", checked, errs)
	}
}

// TestExpandFollowsLinks: a folder's links to regular files are inputs
// like its files (before, a linked scan was left out without a word); a
// link that points nowhere is kept so that reading it names it; links to
// folders and named pipes are left out like folders and pipes.
func TestExpandFollowsLinks(t *testing.T) {
	dir, elsewhere := t.TempDir(), t.TempDir()
	target := filepath.Join(elsewhere, "kept.csv")
	if err := os.WriteFile(filepath.Join(dir, "a.csv"), []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(target, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	links := map[string]string{"b.csv": target, "c.csv": filepath.Join(elsewhere, "gone.csv"), "d": elsewhere}
	if err := syscall.Mkfifo(filepath.Join(elsewhere, "fifo"), 0o600); err == nil {
		links["e"] = filepath.Join(elsewhere, "fifo")
	}
	for name, to := range links {
		if err := os.Symlink(to, filepath.Join(dir, name)); err != nil {
			t.Skipf("no symbolic links here: %v", err)
		}
	}
	var got []string
	for _, in := range ExpandInputs([]string{dir}) {
		got = append(got, filepath.Base(in.Path))
	}
	if want := []string{"a.csv", "b.csv", "c.csv"}; !reflect.DeepEqual(got, want) {
		t.Errorf("ExpandInputs = %v, want %v", got, want)
	}
}

// TestProgressTotalKnown: for many files of one scan each the total that
// Progress gets is the number of files from the first call on (before, it
// counted only the files read so far and the bar sat short of the end);
// a file of many scans raises it once read, and the last call has the
// exact count.
func TestProgressTotalKnown(t *testing.T) {
	sizes := map[string]int{"wide.csv": 30}
	var inputs []Input
	for i := range 50 {
		name := fmt.Sprintf("s%d.csv", i)
		sizes[name] = 1
		inputs = append(inputs, Input{Path: name})
	}
	inputs = append(inputs, Input{Path: "wide.csv"})
	b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: 2, ReadFile: fakeFiles(sizes, nil)}
	var totals []int
	b.Progress = func(done, known int) { totals = append(totals, known) }
	if _, _, err := runBatch(t, context.Background(), b, inputs, 0); err != nil {
		t.Fatal(err)
	}
	for i, k := range totals[:50] {
		if k < 51 {
			t.Fatalf("call %d: total %d, want at least the 51 files", i, k)
		}
	}
	if last := totals[len(totals)-1]; last != 80 {
		t.Errorf("last total %d, want 80", last)
	}
}

// TestReadAheadStateBounded: the read-ahead keeps one slot per file it
// may hold (workers + 1), not one per input, so a folder of 20,000 files
// costs no more state than one of ten (before, one channel per input).
func TestReadAheadStateBounded(t *testing.T) {
	for _, n := range []int{10, 20000} {
		inputs := make([]Input, n)
		for i := range inputs {
			inputs[i] = Input{Path: fmt.Sprintf("s%d.csv", i), Err: errNoMatch}
		}
		ctx, cancel := context.WithCancel(context.Background())
		r := &run{b: &Batch{}, inputs: inputs, workers: 2, ctx: ctx, cancel: cancel}
		var wg sync.WaitGroup
		r.readAhead(&wg)
		if len(r.ready) != 3 {
			t.Errorf("%d inputs: %d read-ahead slots, want 3", n, len(r.ready))
		}
		cancel()
		wg.Wait()
	}
}

// TestUniqueNames: a sample whose name an earlier sample of the run has
// is renamed "NAME (STEM)" after its file, or "NAME#K" when that is
// taken too or the stem is the name; the first keeps its name, the sheet
// (Factors) sees the scan's own name, and Outcome.Renamed says so. The
// names do not depend on the number of workers.
func TestUniqueNames(t *testing.T) {
	names := map[string][]string{
		"a/p.csv": {"S", "T"},
		"b/p.csv": {"S", "S"},
		"c/S.csv": {"S"},
		"d/q.csv": {"T"},
	}
	read := func(path string, _ spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
		var out []*spectrum.Spectrum
		for j, n := range names[path] {
			s := mixture{conc: []float64{5, 3, 1, 8}, noise: testNoise, seed: uint64(j + 1)}.spectrum()
			s.Name, s.Source.File = n, path
			out = append(out, s)
		}
		return out, nil
	}
	for _, workers := range []int{1, 3} {
		var mu sync.Mutex
		var looked []string
		b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: workers, ReadFile: read,
			Factors: func(s *spectrum.Spectrum) (unmix.Factors, error) {
				if s.Name != "S" && s.Name != "T" {
					mu.Lock()
					looked = append(looked, s.Name)
					mu.Unlock()
				}
				return unmix.Factors{}, nil
			}}
		var got, renamed []string
		_, err := b.Run(context.Background(), []Input{{Path: "a/p.csv"}, {Path: "b/p.csv"}, {Path: "c/S.csv"}, {Path: "d/q.csv"}}, func(o Outcome) error {
			got = append(got, o.Result.Sample)
			renamed = append(renamed, o.Renamed)
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		want := []string{"S", "T", "S (p)", "S#2", "S#3", "T (q)"}
		if !reflect.DeepEqual(got, want) || !reflect.DeepEqual(renamed, []string{"", "", "S (p)", "S#2", "S#3", "T (q)"}) || looked != nil {
			t.Errorf("-j %d: names %q, renamed %q, sheet looked up %q; want %q", workers, got, renamed, looked, want)
		}
	}
}

// TestConstantScanRefused: a scan that reads the same value everywhere
// (the zeros of a half-read file) fails with spectrum.ErrMisread, in a
// solve and in a check, and the other samples go on.
func TestConstantScanRefused(t *testing.T) {
	read := func(path string, _ spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
		good := mixture{conc: []float64{5, 3, 1, 8}, noise: testNoise, seed: 1}.spectrum()
		zero := mixture{conc: []float64{5, 3, 1, 8}, noise: testNoise, seed: 2}.spectrum()
		clear(zero.Values)
		good.Source.File, zero.Source.File = path, path
		return []*spectrum.Spectrum{good, zero}, nil
	}
	for _, check := range []bool{false, true} {
		b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: 2, ReadFile: read, CheckOnly: check}
		var errs []error
		sum, err := b.Run(context.Background(), []Input{{Path: "h.csv"}}, func(o Outcome) error {
			errs = append(errs, o.Err)
			return nil
		})
		if err != nil || len(errs) != 2 || errs[0] != nil || !errors.Is(errs[1], spectrum.ErrMisread) || sum.Failed != 1 {
			t.Errorf("check-only %v: %+v, errors %v, %v", check, sum, errs, err)
		}
	}
}

// TestDigests: with Digests, each input file read gives its reader's
// digest once, on its first outcome, in input order for any number of
// workers; an argument that named no file and the other samples of a
// file give none.
func TestDigests(t *testing.T) {
	sizes := map[string]int{"a": 3, "b": 1, "c": 130, "d": 2}
	bad := map[string]bool{"b": true}
	files := fakeFiles(sizes, bad)
	read := func(path string, opt spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
		if opt.Digest == nil {
			t.Fatalf("%s: read without a digest to fill", path)
		}
		opt.Digest.Read = true
		opt.Digest.SHA256[0] = path[0]
		return files(path, opt)
	}
	inputs := []Input{{Path: "a"}, {Path: "b"}, {Path: "*.none", Err: errNoMatch}, {Path: "c"}, {Path: "d"}}
	for _, workers := range []int{1, 2, 5} {
		b := &Batch{Model: mustModel(t, testSet(4), unmix.Options{}), Workers: workers, ReadFile: read, Digests: true}
		var got []string
		outcomes := 0
		_, err := b.Run(context.Background(), inputs, func(o Outcome) error {
			outcomes++
			if o.Digest != nil {
				got = append(got, fmt.Sprintf("%s:%c", o.File, o.Digest.SHA256[0]))
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		if want := []string{"a:a", "b:b", "c:c", "d:d"}; !slices.Equal(got, want) || outcomes != 3+1+1+130+2 {
			t.Errorf("-j %d: digests %v in %d outcomes, want %v in 137", workers, got, outcomes, want)
		}
	}
}
