package spectrum

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// readModes are the ways a delimited table may be read: the serial code
// alone, and parallel block parsing with blocks small enough that even a
// short table has rows parsed by workers (the first block is always
// parsed serially); workers 0 stands for the lines of a file read whole
// into memory (ReadFile's small files, readWhole).
var readModes = []struct {
	name             string
	workers, blockRs int
}{
	{"serial", 1, 0},
	{"parallel/1", 3, 1},
	{"parallel/2", 2, 2},
	{"parallel/8", 4, 8},
	{"serial/3", 1, 3},
	{"whole", 0, 0},
}

// readAs reads data as a delimited table in mode m; warnings are returned
// one a line.
func readAs(data []byte, base ReadOptions, workers, blockRows int) ([]*Spectrum, string, error) {
	var warn strings.Builder
	opt := base
	opt.workers, opt.blockRows = workers, blockRows
	opt.Warn = func(msg string) { warn.WriteString(msg + "\n") }
	if workers == 0 {
		// As readWhole reads a file: in memory, into a scratch.
		opt.sizeHint, opt.scratch = int64(len(data)), new(scratch)
		ss, err := readDelimited(newBytesLineReader(data, "t.csv", opt.maxLine()), "t.csv", opt)
		return ss, warn.String(), err
	}
	ss, err := ReadDelimited(bytes.NewReader(data), "t.csv", opt)
	return ss, warn.String(), err
}

// sameRead fails unless every mode reads data exactly as the serial code
// does: same error text (file, line, column, message), same warnings,
// bit-identical wavelengths and values, same names and quantities.
func sameRead(t *testing.T, data []byte, base ReadOptions) {
	t.Helper()
	want, wantWarn, wantErr := readAs(data, base, 1, 0)
	for _, m := range readModes[1:] {
		got, warn, err := readAs(data, base, m.workers, m.blockRs)
		if fmt.Sprint(err) != fmt.Sprint(wantErr) {
			t.Fatalf("%s: error %v, serial %v\ninput %q", m.name, err, wantErr, data)
		}
		if warn != wantWarn {
			t.Fatalf("%s: warnings %q, serial %q", m.name, warn, wantWarn)
		}
		if len(got) != len(want) {
			t.Fatalf("%s: %d spectra, serial %d", m.name, len(got), len(want))
		}
		for k := range want {
			a, b := want[k], got[k]
			if a.Name != b.Name || a.Quantity != b.Quantity || a.Source != b.Source ||
				!sameBits(a.Wavelengths, b.Wavelengths) || !sameBits(a.Values, b.Values) {
				t.Fatalf("%s: spectrum %d differs: %q %v %v %v, serial %q %v %v %v", m.name, k,
					b.Name, b.Quantity, b.Wavelengths, b.Values, a.Name, a.Quantity, a.Wavelengths, a.Values)
			}
		}
	}
}

func TestParallelBadFiles(t *testing.T) {
	for _, c := range badFiles {
		if filepath.Ext(c.file) == ".jdx" {
			continue
		}
		data, err := os.ReadFile(filepath.Join(specDir, "bad", c.file))
		if err != nil {
			t.Fatal(err)
		}
		t.Run(c.file, func(t *testing.T) { sameRead(t, data, ReadOptions{}) })
	}
}

// TestParallelCases puts each problem after rows that the workers parse,
// past comment lines, so that the line numbers must come from the rows'
// own lines.
func TestParallelCases(t *testing.T) {
	head := "nm,a,b,c\n400,0.5,0.25,1\n# note\n401,0.5,0.25,1\n\n402,1,2,3\n403,1.5,2,3\n"
	for name, tail := range map[string]string{
		"clean":             "404,1,2,3\n405,1,2,3\n# end\n",
		"ragged short":      "404,1,2,3\n405,1,2\n406,1,2,3\n",
		"ragged long":       "404,1,2,3\n405,1,2,3,4\n",
		"text":              "404,1,2,3\n405,1,x,3\n",
		"nan":               "404,1,2,3\n405,1,NaN,3\n",
		"empty field":       "404,1,,3\n",
		"duplicate":         "404,1,2,3\n404,1,2,3\n",
		"order":             "404,1,2,3\n400.5,1,2,3\n",
		"quoted":            "404,\"1\",2,3\n405,1,2,3\n",
		"blanks":            "404, 1 ,2,3\n405,1,2,3\n",
		"trailing":          "404,1,2,3,\n405,1,2,3, \n406,1,2,3,,\n",
		"exponent":          "404,1e-3,2E+2,3\n405,-1,+2,.3\n",
		"parse then order":  "404,1,2,3\n404,1,2,x\n",
		"order then parse":  "404,1,2,3\n404,1,2,3\n405,1,x,3\n",
		"crlf":              "404,1,2,3\r\n405,1,2,3\r\n",
		"too long":          "404,1,2,3\n405,1,2,3\n" + strings.Repeat("9", 200) + "\n",
		"spaces in numbers": "404,1 2,2,3\n",
	} {
		t.Run(name, func(t *testing.T) {
			sameRead(t, []byte(head+tail), ReadOptions{MaxLineBytes: 100})
		})
	}
	for name, data := range map[string]string{
		"mark settles late":  "nm;a;b\n400;1;2\n401;1;2\n402;1;2\n403;1,5;2\n404;1;2,5\n405;1.5;2\n",
		"mixed in a block":   "nm;a\n400;1\n401;1\n402;1,5\n403;1.5\n",
		"descending":         "nm,a,b\n405,1,2\n404,3,4\n403,5,6\n402,7,8\n401,9,10\n",
		"wavenumber":         "cm-1\ta\tb\n25000\t1\t2\n24990\t3\t4\n24980\t5\t6\n24970\t7\t8\n",
		"blanks table":       "nm a b\n400 1 2\n401 3 4\n402 5 6\n403 7 8\n",
		"percent T":          "nm,%T,%T\n400,50,60\n401,40,60\n402,40,60\n403,40,60\n",
		"one column of data": "400,1\n401,2\n402,3\n403,4\n404,5\n405,6\n406,7\n407,8\n408,9\n409,10\n",
	} {
		t.Run(name, func(t *testing.T) { sameRead(t, []byte(data), ReadOptions{}) })
	}
}

// TestParallelRandom reads random tables, clean and with one fault, of
// many sizes; the store grows from its first size on the way.
func TestParallelRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 16))
	faults := []string{"", "x", "", "1,5", "", "", "1e", ""}
	for trial := range 200 {
		rows, cols := 2+rng.IntN(60), 1+rng.IntN(12)
		var b bytes.Buffer
		b.WriteString("nm")
		for j := range cols {
			fmt.Fprintf(&b, ",s%d", j)
		}
		b.WriteByte('\n')
		bad := faults[rng.IntN(len(faults))]
		badRow, badCol := rng.IntN(rows), rng.IntN(cols)
		for i := range rows {
			if rng.IntN(10) == 0 {
				b.WriteString("# comment\n")
			}
			fmt.Fprintf(&b, "%d", 300+i)
			for j := range cols {
				if bad != "" && i == badRow && j == badCol {
					b.WriteString("," + bad)
					continue
				}
				fmt.Fprintf(&b, ",%.6g", rng.NormFloat64())
			}
			b.WriteByte('\n')
		}
		t.Run(fmt.Sprint(trial), func(t *testing.T) { sameRead(t, b.Bytes(), ReadOptions{}) })
	}
}

// TestLargeTableStore reads a table through ReadFile (the size sets the
// store and chooses parallel reading) and compares it with the serial
// code; a first line much longer than the rest makes the estimate of the
// rows too small, so the store grows.
func TestLargeTableStore(t *testing.T) {
	var b bytes.Buffer
	const cols = 300
	b.WriteString("nm")
	for j := range cols {
		fmt.Fprintf(&b, ",sample %d", j)
	}
	b.WriteByte('\n')
	for i := 0; b.Len() < parallelMinBytes+1000; i++ {
		fmt.Fprintf(&b, "%d", 200+i)
		for j := range cols {
			if i == 0 {
				fmt.Fprintf(&b, ",%.17g", float64(j)/7)
			} else {
				fmt.Fprintf(&b, ",%d.%d", j%3, i%10)
			}
		}
		b.WriteByte('\n')
	}
	path := filepath.Join(t.TempDir(), "wide.csv")
	if err := os.WriteFile(path, b.Bytes(), 0o600); err != nil {
		t.Fatal(err)
	}
	got, err := ReadFile(path, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	want, _, err := readAs(b.Bytes(), ReadOptions{}, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != cols || len(want) != cols {
		t.Fatalf("%d and %d spectra, want %d", len(got), len(want), cols)
	}
	for k := range want {
		if !sameBits(got[k].Values, want[k].Values) || !sameBits(got[k].Wavelengths, want[k].Wavelengths) {
			t.Fatalf("spectrum %d differs between ReadFile and the serial code", k)
		}
	}
}

// FuzzParallelRead compares parallel and serial reading on any input.
func FuzzParallelRead(f *testing.F) {
	seedFiles(f, ".csv", ".tsv")
	for _, s := range []string{"nm,a\n400,1\n401,2\n402,3\n403,x\n", "nm;a;b\n400;1;2\n401;1,5;2\n402;1.5;2\n", "1,2,3\n2,3,4\n3,4\n"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) { sameRead(t, data, fuzzLimits) })
}
