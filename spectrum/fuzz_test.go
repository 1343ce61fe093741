package spectrum

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// seedFiles adds the catalogue of bad files and the good fixtures whose
// names end in one of exts to the fuzz corpus.
func seedFiles(f *testing.F, exts ...string) {
	for _, dir := range []string{specDir, filepath.Join(specDir, "bad")} {
		ents, err := os.ReadDir(dir)
		if err != nil {
			f.Fatal(err)
		}
		for _, e := range ents {
			for _, x := range exts {
				if strings.HasSuffix(e.Name(), x) {
					b, err := os.ReadFile(filepath.Join(dir, e.Name()))
					if err != nil {
						f.Fatal(err)
					}
					f.Add(b)
				}
			}
		}
	}
}

// fuzzLimits keep fuzzed inputs small.
var fuzzLimits = ReadOptions{MaxLineBytes: 1 << 16, MaxColumns: 1000}

// checkParseError fails unless err is a *ParseError naming file.
func checkParseError(t *testing.T, err error, file string) {
	t.Helper()
	var pe *ParseError
	if !errors.As(err, &pe) || pe.File != file || !strings.HasPrefix(err.Error(), file+":") {
		t.Fatalf("error %T %q does not name %s", err, err, file)
	}
}

func checkSpectrum(t *testing.T, s *Spectrum) {
	t.Helper()
	if err := s.Check(); err != nil {
		t.Fatalf("reader returned a bad spectrum: %v", err)
	}
	if s.Len() < 2 || s.Quantity == Unstated {
		t.Fatalf("reader returned %d points, quantity %v", s.Len(), s.Quantity)
	}
}

// FuzzReadDelimited: no panic; errors name the file; what parses is a
// valid spectrum and survives WriteDelimited + ReadDelimited unchanged.
func FuzzReadDelimited(f *testing.F) {
	seedFiles(f, ".csv", ".tsv")
	for _, s := range []string{"400 1\n401 2\n", "nm;%T\n400,5;1,5\n401;2\n", "a\tb\tc\n1\t2\t3\n4\t5\t6\n", "1,2\n1,2\n"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		ss, err := ReadDelimited(bytes.NewReader(data), "fuzz.csv", fuzzLimits)
		if err != nil {
			checkParseError(t, err, "fuzz.csv")
			return
		}
		for _, s := range ss {
			checkSpectrum(t, s)
		}
		var b bytes.Buffer
		if err := WriteDelimited(&b, ss, WriteOptions{}); err != nil {
			t.Fatalf("write what was read: %v", err)
		}
		back, err := ReadDelimited(&b, "fuzz.csv", fuzzLimits)
		if err != nil {
			t.Fatalf("read back: %v\n%s", err, b.String())
		}
		if len(back) != len(ss) {
			t.Fatalf("read back %d spectra, wrote %d", len(back), len(ss))
		}
		for k := range ss {
			a, c := ss[k], back[k]
			if a.Name != c.Name || a.Quantity != c.Quantity || !sameBits(a.Values, c.Values) || !sameBits(a.Wavelengths, c.Wavelengths) {
				t.Fatalf("round trip of spectrum %d: %q %v %v -> %q %v %v", k, a.Name, a.Quantity, a.Values, c.Name, c.Quantity, c.Values)
			}
		}
	})
}

// FuzzReadJCAMP: no panic; errors name the file; what parses is a valid
// spectrum that WriteJCAMP writes and ReadJCAMP reads back: exactly in
// AFFN (X to rounding), to half a YFACTOR step when compressed.
func FuzzReadJCAMP(f *testing.F) {
	seedFiles(f, ".jdx")
	f.Add([]byte(jdx("##XUNITS=1/CM\n##YUNITS=TRANSMITTANCE\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=25000\n##LASTX=20000\n##NPOINTS=3\n##XYDATA=(X++(Y..Y))\n", "25000 @J%\n20000 A\n")))
	f.Add([]byte(jdx("##XUNITS=NM\n##YUNITS=A\n##XYPOINTS=(XY..XY)\n", "400, 1; 401, 2\n")))
	f.Fuzz(func(t *testing.T, data []byte) {
		ss, err := ReadJCAMP(bytes.NewReader(data), "fuzz.jdx", fuzzLimits)
		if err != nil {
			checkParseError(t, err, "fuzz.jdx")
			return
		}
		if len(ss) != 1 {
			t.Fatalf("%d spectra", len(ss))
		}
		s := ss[0]
		checkSpectrum(t, s)
		want := s.Values
		if s.Quantity == PercentT {
			want = make([]float64, s.Len())
			for i, v := range s.Values {
				want[i] = v / 100
			}
		}
		span := s.Wavelengths[s.Len()-1] - s.Wavelengths[0]
		for _, compressed := range []bool{false, true} {
			var b bytes.Buffer
			err := WriteJCAMP(&b, s, JCAMPOptions{Compressed: compressed})
			if errors.Is(err, errNotSupported) {
				continue // values beyond what scaled integers hold
			}
			if err != nil {
				t.Fatalf("write (compressed %v): %v", compressed, err)
			}
			back, err := ReadJCAMP(&b, "fuzz.jdx", fuzzLimits)
			if err != nil {
				t.Fatalf("read back (compressed %v): %v\n%s", compressed, err, b.String())
			}
			c := back[0]
			if c.Len() != s.Len() {
				t.Fatalf("read back %d points, wrote %d", c.Len(), s.Len())
			}
			maxAbs := 0.0
			for _, v := range want {
				maxAbs = max(maxAbs, math.Abs(v))
			}
			for i := range want {
				// X is rebuilt as FIRSTX + i*DELTAX: rounding only.
				if math.Abs(c.Wavelengths[i]-s.Wavelengths[i]) > 1e-9*span {
					t.Fatalf("X[%d] = %v, wrote %v (compressed %v)", i, c.Wavelengths[i], s.Wavelengths[i], compressed)
				}
				tol := 0.0
				if compressed {
					tol = 0.5*math.Pow(10, math.Floor(math.Log10(maxAbs))-(jcampDigits-1))*(1+1e-9) + 1e-15*maxAbs
				} else if c.Values[i] != want[i] {
					t.Fatalf("Y[%d] = %v, wrote %v", i, c.Values[i], want[i])
				}
				if math.Abs(c.Values[i]-want[i]) > tol {
					t.Fatalf("Y[%d] = %v, wrote %v (compressed %v)", i, c.Values[i], want[i], compressed)
				}
			}
		}
	})
}
