package spectrum

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func TestDelimitedRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 2))
	wl := []float64{190, 190.1, 200.25, 1e3, 1100.0000000001}
	mk := func(name string, q Quantity) *Spectrum {
		v := make([]float64, len(wl))
		for i := range v {
			v[i] = r.NormFloat64() * math.Pow(10, float64(r.IntN(20)-10))
		}
		return &Spectrum{Name: name, Wavelengths: wl, Values: v, Quantity: q}
	}
	for _, delim := range []byte{',', ';', '\t'} {
		for _, ss := range [][]*Spectrum{
			{mk("only", PercentT)},
			{mk("a, b", Absorbance), mk(`say "T"`, Transmittance), mk("trans-isomer", PercentT), mk("", Absorbance)},
		} {
			var b bytes.Buffer
			if err := WriteDelimited(&b, ss, WriteOptions{Delimiter: delim, Comments: []string{"made by a test", "two\nlines"}}); err != nil {
				t.Fatal(err)
			}
			var warns []string
			got, err := ReadDelimited(bytes.NewReader(b.Bytes()), "rt.csv", ReadOptions{Warn: func(m string) { warns = append(warns, m) }})
			if err != nil {
				t.Fatalf("delim %q: %v\n%s", delim, err, b.String())
			}
			if len(got) != len(ss) || strings.Contains(strings.Join(warns, "\n"), "does not say") {
				t.Fatalf("delim %q: %d spectra, warnings %q\n%s", delim, len(got), warns, b.String())
			}
			for k, s := range ss {
				g := got[k]
				wantName := s.Name
				if wantName == "" {
					wantName = "rt.csv#col" + strconv.Itoa(k+2)
					if len(ss) == 1 {
						wantName = "rt"
					}
				}
				if g.Name != wantName || g.Quantity != s.Quantity || !equalFloats(g.Values, s.Values) || !equalFloats(g.Wavelengths, s.Wavelengths) {
					t.Errorf("delim %q spectrum %d: got %q %v %v, want %q %v %v", delim, k, g.Name, g.Quantity, g.Values, wantName, s.Quantity, s.Values)
				}
			}
		}
	}
}

func TestWriteDelimitedRefuses(t *testing.T) {
	a := &Spectrum{Name: "a", Wavelengths: []float64{400, 401}, Values: []float64{1, 2}}
	b := &Spectrum{Name: "b", Wavelengths: []float64{400, 402}, Values: []float64{1, 2}}
	if err := WriteDelimited(&bytes.Buffer{}, []*Spectrum{a, b}, WriteOptions{}); !errors.Is(err, errGrid) {
		t.Errorf("different grids: %v", err)
	}
	c := &Spectrum{Name: "c", Wavelengths: []float64{400, 401}, Values: []float64{1, math.Inf(1)}}
	if err := WriteDelimited(&bytes.Buffer{}, []*Spectrum{c}, WriteOptions{}); err == nil {
		t.Error("Inf written")
	}
	if err := WriteDelimited(&bytes.Buffer{}, nil, WriteOptions{}); !errors.Is(err, ErrEmpty) {
		t.Errorf("nothing: %v", err)
	}
}

func ExampleWriteDelimited() {
	s := &Spectrum{Name: "std 1", Wavelengths: []float64{400, 405, 410}, Values: []float64{0.1, 0.25, 0.125}, Quantity: Absorbance}
	var b bytes.Buffer
	if err := WriteDelimited(&b, []*Spectrum{s}, WriteOptions{}); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Print(b.String())
	ss, err := ReadDelimited(&b, "std1.csv", ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(ss[0].Name, ss[0].Quantity, ss[0].Values)
	// Output:
	// wavelength (nm),std 1 [absorbance]
	// 400,0.1
	// 405,0.25
	// 410,0.125
	// std 1 absorbance [0.1 0.25 0.125]
}

func ExampleReadDelimited() {
	// A European export: preamble, semicolons, decimal commas, descending.
	in := "Spectrometer export\r\nWellenlänge;%T\r\n402,0;50,0\r\n401,0;25,5\r\n400,0;10,0\r\n"
	ss, err := ReadDelimited(strings.NewReader(in), "eu.csv", ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	s := ss[0]
	fmt.Println(s.Quantity, s.Wavelengths, s.Values)
	if err := s.ToAbsorbance(); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f\n", s.Values)
	// Output:
	// %T [400 401 402] [10 25.5 50]
	// [1.0000 0.5935 0.3010]
}

// wideTable makes a tab-separated table of rows wavelengths and cols
// spectra with values written to 5 decimals, as instruments export them.
func wideTable(rows, cols int) []byte {
	r := rand.New(rand.NewPCG(3, 3))
	var b bytes.Buffer
	b.WriteString("nm")
	for j := 0; j < cols; j++ {
		fmt.Fprintf(&b, "\ts%d (A)", j)
	}
	b.WriteByte('\n')
	buf := make([]byte, 0, 32)
	for i := 0; i < rows; i++ {
		b.WriteString(strconv.Itoa(300 + i))
		for j := 0; j < cols; j++ {
			b.WriteByte('\t')
			buf = strconv.AppendFloat(buf[:0], r.Float64(), 'f', 5, 64)
			b.Write(buf)
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// BenchmarkReadWide reads a wide table of 401 wavelengths x 20,000 spectra
// (about 70 MB), from memory and from a file.
func BenchmarkReadWide(b *testing.B) {
	const rows, cols = 401, 20000
	data := wideTable(rows, cols)
	b.Run(fmt.Sprintf("rows=%d/cols=%d/mem", rows, cols+1), func(b *testing.B) {
		b.SetBytes(int64(len(data)))
		for b.Loop() {
			ss, err := ReadDelimited(bytes.NewReader(data), "wide.tsv", ReadOptions{})
			if err != nil || len(ss) != cols {
				b.Fatal(err)
			}
		}
		b.ReportMetric(float64(rows*(cols+1))*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mfields/s")
	})
	path := filepath.Join(b.TempDir(), "wide.tsv")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.Fatal(err)
	}
	b.Run(fmt.Sprintf("rows=%d/cols=%d/file", rows, cols+1), func(b *testing.B) {
		b.SetBytes(int64(len(data)))
		for b.Loop() {
			ss, err := ReadFile(path, ReadOptions{})
			if err != nil || len(ss) != cols {
				b.Fatal(err)
			}
		}
	})
}

// BenchmarkReadFolder reads a folder of 5,000 two-column scans of 301
// points each, one ReadFile per file.
func BenchmarkReadFolder(b *testing.B) {
	const files, points = 5000, 301
	dir := b.TempDir()
	r := rand.New(rand.NewPCG(4, 4))
	paths := make([]string, files)
	var buf bytes.Buffer
	for k := range paths {
		buf.Reset()
		buf.WriteString("wavelength (nm),absorbance\n")
		for i := 0; i < points; i++ {
			fmt.Fprintf(&buf, "%d,%.4f\n", 400+i, r.Float64())
		}
		paths[k] = filepath.Join(dir, fmt.Sprintf("scan%04d.csv", k))
		if err := os.WriteFile(paths[k], buf.Bytes(), 0o644); err != nil {
			b.Fatal(err)
		}
	}
	b.Run(fmt.Sprintf("files=%d/points=%d", files, points), func(b *testing.B) {
		for b.Loop() {
			for _, p := range paths {
				if _, err := ReadFile(p, ReadOptions{}); err != nil {
					b.Fatal(err)
				}
			}
		}
		b.ReportMetric(float64(files)*float64(b.N)/b.Elapsed().Seconds(), "files/s")
	})
}
