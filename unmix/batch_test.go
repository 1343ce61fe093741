package unmix

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"huesolve/spectrum"
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
	inputs := []Input{{Path: "a.csv"}, {Path: "wide.csv"}, {Path: "bad.csv"}, {Path: "none*.csv", Err: ErrNoMatch}, {Path: "b.csv"}, {Path: "c.csv"}}
	var first []record
	for _, workers := range []int{1, 2, 4, 7} {
		b := &Batch{Model: mustModel(t, testSet(4), Options{}), Workers: workers,
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
	b := &Batch{Model: mustModel(t, testSet(4), Options{}), Workers: 3, ReadFile: fakeFiles(sizes, nil)}
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
	b := &Batch{Model: mustModel(t, testSet(4), Options{}), Workers: 2, ReadFile: fakeFiles(sizes, nil)}
	b.Factors = func(s *spectrum.Spectrum) (Factors, error) {
		if strings.HasSuffix(s.Name, "#1") {
			return Factors{}, errors.New("no factors")
		}
		return Factors{Dilution: 2}, nil
	}
	b.Each = func(_ int, r *Result) error {
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

func TestSampleSheet(t *testing.T) {
	text := "# dilutions\nSample;Dilution;Path_cm\nA1;10;\nrun2.csv;;0.5\n\"B 3\";2.5;0.2\n"
	sh, err := ParseSampleSheet(strings.NewReader(text), "sheet.csv")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name, file string
		want       Factors
		ok         bool
	}{
		{"A1", "x.csv", Factors{Dilution: 10}, true},
		{"", "data/run2.csv", Factors{PathCM: 0.5}, true},
		{"col", "data/run2.csv", Factors{PathCM: 0.5}, true},
		{"B 3", "y.csv", Factors{Dilution: 2.5, PathCM: 0.2}, true},
		{"Q", "data/A1.txt", Factors{Dilution: 10}, true},
		{"Q", "q.csv", Factors{}, false},
	} {
		s := &spectrum.Spectrum{Name: c.name, Source: spectrum.Source{File: c.file}}
		f, ok := sh.Lookup(s)
		if f != c.want || ok != c.ok {
			t.Errorf("Lookup(%q, %q) = %+v, %v, want %+v, %v", c.name, c.file, f, ok, c.want, c.ok)
		}
	}
	for _, c := range []struct{ text, want string }{
		{"sample,dilution\nA,zero\n", "sheet.csv:2:2: dilution \"zero\" is not a number"},
		{"sample,dilution\nA,1+3\n", "sheet.csv:2:2: dilution \"1+3\" is not a number"},
		{"sample,dilution\nA,-2\n", "sheet.csv:2:2: dilution \"-2\" is not a positive number"},
		{"sample,dilution\nA,NaN\n", "sheet.csv:2:2:"},
		{"sample,dilution\nA,2e9\n", "sheet.csv:2:2: dilution \"2e9\": want a factor from 1e-06 to 1e+09"},
		{"sample,dilution,path_cm\nA,2,4e-324\n", "sheet.csv:2:3: path_cm \"4e-324\": want 0.0001 to 100 cm"},
		{"sample;path_cm\nA;150\n", "sheet.csv:2:2: path_cm \"150\""},
		{"name,dilution\nA,2\n", "sheet.csv:1:1: unknown column \"name\""},
		{"sample,note\nA,x\n", "sheet.csv:1: header needs"},
		{"sample,path_cm\nA,1\nA,2\n", "sheet.csv:3:1: sample \"A\" already given on line 2"},
		{"sample,path_cm\n,1\n", "sheet.csv:2:1: empty sample name"},
		{"", "sheet.csv: no data"},
	} {
		_, err := ParseSampleSheet(strings.NewReader(c.text), "sheet.csv")
		if err == nil || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("ParseSampleSheet(%q) error %v, want prefix %q", c.text, err, c.want)
		}
	}
}

// FuzzSampleSheet: any input gives a sheet or an error naming the file,
// never a panic.
func FuzzSampleSheet(f *testing.F) {
	for _, s := range []string{
		"sample,dilution,path_cm\nA1,10,\nrun2.csv,,0.5\n",
		"# c\nSample;Dilution\n\"B 3\";2.5\n",
		"sample\tpath_cm\nx\t1e-3\n",
		"sample,dilution\nA,NaN\n",
		"",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		sh, err := ParseSampleSheet(strings.NewReader(text), "fuzz.csv")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz.csv") {
				t.Fatalf("error %q does not name the file", err)
			}
			return
		}
		for name := range sh.rows {
			fs, ok := sh.Lookup(&spectrum.Spectrum{Name: name})
			if !ok || fs.Dilution < 0 || fs.PathCM < 0 {
				t.Fatalf("Lookup(%q) = %+v, %v", name, fs, ok)
			}
		}
	})
}
