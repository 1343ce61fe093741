package spectrum

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"testing"
)

// TestASDFLines decodes Y values written in the compressed forms of the
// JCAMP-DX standard. The rules (SQZ @ A-I a-i; DIF % J-R j-r; DUP S-Z s
// counting the original; PAC tokens split at their sign) are those of
// R. S. McDonald and P. A. Wilks, "JCAMP-DX: A Standard Form for Exchange
// of Infrared Spectra in Computer Readable Form", Appl. Spectrosc. 42(1)
// (1988) 151-162. The first five lines are the examples worked by hand in
// the project notes; the rest were built by hand from the same rules.
func TestASDFLines(t *testing.T) {
	for _, c := range []struct {
		line string
		want []float64
	}{
		{"A23", []float64{123}},
		{"b5", []float64{-25}},
		{"A23J2", []float64{123, 135}},
		{"A23T", []float64{123, 123}},
		{"A23J2T", []float64{123, 135, 147}},
		// Built by hand from the rules:
		{"@", []float64{0}},
		{"I9", []float64{99}},
		{"i9", []float64{-99}},
		{"A%", []float64{1, 1}},                                // DIF zero
		{"A%V", []float64{1, 1, 1, 1, 1}},                      // % repeated 4 times in all
		{"@J", []float64{0, 1}},                                // DIF +1
		{"@r", []float64{0, -9}},                               // DIF -9
		{"A0j0", []float64{10, 0}},                             // DIF -10
		{"5 6 7", []float64{5, 6, 7}},                          // AFFN, blanks
		{"5,6,,7", []float64{5, 6, 7}},                         // AFFN, commas
		{"1+2-3", []float64{1, 2, -3}},                         // PAC
		{"-1.5+2.25", []float64{-1.5, 2.25}},                   // PAC with decimals
		{"1.5E+2 3E-1", []float64{150, 0.3}},                   // AFFN exponents
		{"A1B2C3", []float64{11, 22, 33}},                      // SQZ run
		{"A1J1J1", []float64{11, 22, 33}},                      // the same in DIF
		{"A1J1T", []float64{11, 22, 33}},                       // and with DUP
		{"a1j1T", []float64{-11, -22, -33}},                    // negative
		{"E0000K5000", []float64{50000, 75000}},                // long digits
		{"A0J0S0", append([]float64{10}, ramp(20, 10, 10)...)}, // DUP 10: J0 ten times
		{"@%Z", []float64{0, 0, 0, 0, 0, 0, 0, 0, 0}},          // Z = 8 repeats of %
		{"@%s", []float64{0, 0, 0, 0, 0, 0, 0, 0, 0, 0}},       // s = 9
		// A DUP count of two digits right after an SQZ value repeats the
		// absolute value: S2 = 12 in all, S0 = 10 (the 0 is a digit of
		// the count, not a DUP of zero).
		{"A0S2", repeat(10, 12)},
		{"A1S0", repeat(11, 10)},
		{"A1S0B2", append(repeat(11, 10), 22)},
	} {
		d := asdfDecoder{limit: 1000}
		x, checked, err := d.line([]byte("400 " + c.line))
		if err != nil || x != 400 || checked {
			t.Errorf("decode %q: x %g, checked %v, err %v", c.line, x, checked, err)
			continue
		}
		if !equalFloats(d.ys, c.want) {
			t.Errorf("decode %q = %v, want %v", c.line, d.ys, c.want)
		}
	}
}

func repeat(v float64, n int) []float64 { return ramp(v, 0, n) }

func ramp(start, step float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = start + float64(i)*step
	}
	return out
}

func equalFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func TestASDFYCheck(t *testing.T) {
	d := asdfDecoder{limit: 100}
	// Line 1 ends in DIF form, so line 2 repeats 102 as its check value.
	for _, l := range []string{"1 A00JJ", "3 A02J", "4 A03"} {
		if _, _, err := d.line([]byte(l)); err != nil {
			t.Fatalf("%q: %v", l, err)
		}
	}
	if want := []float64{100, 101, 102, 103}; !equalFloats(d.ys, want) {
		t.Errorf("ys = %v, want %v", d.ys, want)
	}
	// A line ending in SQZ form is not checked: the next line's first
	// value is a new point.
	d = asdfDecoder{limit: 100}
	for _, l := range []string{"1 A00A01", "3 A02"} {
		if _, _, err := d.line([]byte(l)); err != nil {
			t.Fatal(err)
		}
	}
	if len(d.ys) != 3 {
		t.Errorf("after SQZ line: %v", d.ys)
	}
	// A wrong check value is an error at its column.
	d = asdfDecoder{limit: 100}
	d.line([]byte("1 A00JJ"))
	_, _, err := d.line([]byte("3  A03J"))
	var ce *colError
	if !errors.As(err, &ce) || ce.col != 4 || !errors.Is(err, errYCheck) {
		t.Errorf("bad check: %v", err)
	}
}

func TestASDFErrors(t *testing.T) {
	for _, c := range []struct {
		line string
		col  int
	}{
		{"400 J1", 5},       // line starts with DIF
		{"400 T", 5},        // DUP with nothing to repeat
		{"400 A1TT", 8},     // two DUPs
		{"400 A1?", 7},      // missing value
		{"400 A1#", 7},      // junk
		{"J1 A1", 1},        // X in DIF form
		{"400", 4},          // no Y
		{"400 A1Z99999", 7}, // DUP beyond the limit
	} {
		d := asdfDecoder{limit: 1000}
		_, _, err := d.line([]byte(c.line))
		var ce *colError
		if !errors.As(err, &ce) || ce.col != c.col {
			t.Errorf("decode %q: %v, want an error at column %d", c.line, err, c.col)
		}
	}
}

// jdx builds a small JCAMP-DX file around header lines and data lines.
func jdx(header, data string) string {
	return "##TITLE=t\n##JCAMP-DX=4.24\n##DATA TYPE=UV/VIS SPECTRUM\n" + header + data + "##END=\n"
}

func readJ(t *testing.T, in string, opt ReadOptions) (*Spectrum, []string, error) {
	t.Helper()
	var warns []string
	opt.Warn = func(m string) { warns = append(warns, m) }
	ss, err := ReadJCAMP(strings.NewReader(in), "t.jdx", opt)
	if err != nil {
		return nil, warns, err
	}
	return ss[0], warns, nil
}

func TestJCAMPUnits(t *testing.T) {
	head := "##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=25000\n##LASTX=20000\n##NPOINTS=2\n"
	s, _, err := readJ(t, jdx("##XUNITS=1/CM\n##YUNITS=ABSORBANCE\n"+head+"##XYDATA=(X++(Y..Y))\n", "25000 1 2\n"), ReadOptions{})
	// 25000 cm-1 = 400 nm and 20000 cm-1 = 500 nm: lambda/nm = 1e7/(nu/cm-1).
	if err != nil || s.Wavelengths[0] != 400 || s.Wavelengths[1] != 500 || s.Values[0] != 1 || s.Values[1] != 2 {
		t.Errorf("1/CM: %v %v", s, err)
	}
	s, _, err = readJ(t, jdx("##XUNITS=MICROMETERS\n##YUNITS=TRANSMITTANCE\n##XFACTOR=0.001\n##YFACTOR=0.01\n##FIRSTX=0.5\n##LASTX=0.4\n##NPOINTS=3\n##XYDATA=(X++(Y..Y))\n", "500 50 60 70\n"), ReadOptions{})
	if err != nil || !equalFloats(s.Wavelengths, []float64{400, 450, 500}) || math.Abs(s.Values[0]-0.7) > 1e-15 || s.Quantity != Transmittance {
		t.Errorf("µm: %+v %v", s, err)
	}
	// TRANSMITTANCE with values above 2: percent, with a warning.
	s, warns, err := readJ(t, jdx("##XUNITS=NANOMETERS\n##YUNITS=TRANSMITTANCE\n"+strings.Replace(head, "25000", "400", 1)[:0]+
		"##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n", "400 50 60\n"), ReadOptions{})
	if err != nil || s.Quantity != PercentT || len(warns) != 1 {
		t.Errorf("percent: %v %v %q", s, err, warns)
	}
	s, _, err = readJ(t, jdx("##XUNITS=NM\n##YUNITS=% TRANSMITTANCE\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), ReadOptions{})
	if err != nil || s.Quantity != PercentT {
		t.Errorf("%% TRANSMITTANCE: %v %v", s, err)
	}
	// YUNITS that state a quantity win over the requested one, with a
	// warning naming the file and line; the request settles fraction or
	// percent of a bare TRANSMITTANCE, and applies when YUNITS is missing.
	abs := "##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n"
	s, warns, err = readJ(t, jdx(abs, "400 1 2\n"), ReadOptions{Quantity: PercentT})
	if err != nil || s.Quantity != Absorbance || len(warns) != 1 || !strings.Contains(warns[0], "YUNITS=ABSORBANCE states absorbance, not the %T requested") {
		t.Errorf("ABSORBANCE with %%T requested: %v %v %q", s, err, warns)
	}
	s, warns, err = readJ(t, jdx(strings.Replace(abs, "ABSORBANCE", "TRANSMITTANCE", 1), "400 50 60\n"), ReadOptions{Quantity: PercentT})
	if err != nil || s.Quantity != PercentT || len(warns) != 0 {
		t.Errorf("TRANSMITTANCE with %%T requested: %v %v %q", s, err, warns)
	}
	s, warns, err = readJ(t, jdx(strings.Replace(abs, "ABSORBANCE", "TRANSMITTANCE", 1), "400 0.5 0.6\n"), ReadOptions{Quantity: Absorbance})
	if err != nil || s.Quantity != Transmittance || len(warns) != 1 || !strings.Contains(warns[0], "not the absorbance requested") {
		t.Errorf("TRANSMITTANCE with absorbance requested: %v %v %q", s, err, warns)
	}
	s, warns, err = readJ(t, jdx(strings.Replace(abs, "##YUNITS=ABSORBANCE\n", "", 1), "400 50 60\n"), ReadOptions{Quantity: PercentT})
	if err != nil || s.Quantity != PercentT || len(warns) != 0 {
		t.Errorf("no YUNITS, %%T requested: %v %v %q", s, err, warns)
	}
	// Unknown units.
	_, _, err = readJ(t, jdx("##XUNITS=SECONDS\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), ReadOptions{})
	if !errors.Is(err, errNotSupported) {
		t.Errorf("SECONDS: %v", err)
	}
	_, _, err = readJ(t, jdx("##XUNITS=NANOMETERS\n##YUNITS=LOG(EPSILON)\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), ReadOptions{})
	if !errors.Is(err, errNotSupported) {
		t.Errorf("LOG(EPSILON): %v", err)
	}
	s, warns, err = readJ(t, jdx("##XUNITS=NANOMETERS\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), ReadOptions{})
	if err != nil || s.Quantity != Absorbance || len(warns) != 3 {
		t.Errorf("no YUNITS/XFACTOR/YFACTOR: %v %v %q", s, err, warns)
	}
}

func TestJCAMPRecords(t *testing.T) {
	// Label spelling, $$ comments, continuation lines, user labels.
	in := "##title= a $$ comment\n##JCAMP-DX=5.01 $$ x\n##Data_Type=UV-VIS SPECTRUM\n##$VENDOR NOTE= 1\n##$VENDOR NOTE= 2\n" +
		"##COMMENTS=first\nsecond line\n##X UNITS=nanometers\n##y-units=absorbance\n##xfactor=1\n##yfactor=1\n" +
		"##First X=400\n##LAST_X=402\n##NPOINTS=3\n##FIRSTY=1\n##XYDATA=(X++(Y..Y)) $$ table\n400 1 2 3 $$ trailing\n##END= $$ done\n\n"
	ss, err := ReadJCAMP(strings.NewReader(in), "r.jdx", ReadOptions{})
	if err != nil || ss[0].Name != "a" || !equalFloats(ss[0].Values, []float64{1, 2, 3}) || ss[0].Source.Line != 16 {
		t.Fatalf("records: %v %v", ss, err)
	}
	for _, c := range []struct {
		name, in string
		line     int
	}{
		{"no TITLE first", "##JCAMP-DX=4.24\n##END=\n", 1},
		{"text first", "hello\n##TITLE=x\n", 1},
		{"label without =", "##TITLE=x\n##XUNITS\n##END=\n", 2},
		{"no table", "##TITLE=x\n##END=\n", 2},
		{"missing NPOINTS", jdx("##XUNITS=NM\n##YUNITS=A\n##FIRSTX=400\n##LASTX=401\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), 8},
		{"bad XYDATA form", jdx("##XYDATA=(R++(R..R))\n", "1 2\n"), 4},
		{"NTUPLES", "##TITLE=x\n##JCAMP-DX=5\n##NTUPLES=UV\n##END=\n", 3},
		{"X check", jdx("##XUNITS=NM\n##YUNITS=A\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=403\n##NPOINTS=4\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n405 3 4\n"), 13},
		{"FIRSTY", jdx("##XUNITS=NM\n##YUNITS=A\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##FIRSTY=5\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), 11},
		{"huge NPOINTS", jdx("##XUNITS=NM\n##YUNITS=A\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=1e12\n##XYDATA=(X++(Y..Y))\n", "400 1 2\n"), 8},
		{"more points than NPOINTS", jdx("##XUNITS=NM\n##YUNITS=A\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n", "400 1 2 3\n"), 10},
		{"twice", jdx("##XUNITS=NM\n##XUNITS=NM\n", ""), 5},
		{"after END", "##TITLE=x\n##END=\nmore\n", 3},
	} {
		_, err := ReadJCAMP(strings.NewReader(c.in), "r.jdx", ReadOptions{})
		var pe *ParseError
		if !errors.As(err, &pe) || pe.Line != c.line || pe.File != "r.jdx" {
			t.Errorf("%s: %v, want an error on line %d", c.name, err, c.line)
		}
	}
}

func TestJCAMPXYPoints(t *testing.T) {
	in := jdx("##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=0.5\n##NPOINTS=4\n##FIRSTX=410\n##LASTX=400\n##XYPOINTS=(XY..XY)\n",
		"410, 2; 405.5, 4\n402 6\n400,8\n")
	s, _, err := readJ(t, in, ReadOptions{})
	if err != nil || !equalFloats(s.Wavelengths, []float64{400, 402, 405.5, 410}) || !equalFloats(s.Values, []float64{4, 3, 2, 1}) {
		t.Fatalf("XYPOINTS: %+v %v", s, err)
	}
	for _, data := range []string{"410, 2; 405.5\n", "410,1\n410,2\n400,1\n", "410,1\n400,2\n405,3\n"} {
		if _, _, err := readJ(t, jdx("##XUNITS=NM\n##YUNITS=A\n##XYPOINTS=(XY..XY)\n", data), ReadOptions{}); err == nil {
			t.Errorf("XYPOINTS %q: no error", data)
		}
	}
}

// testSpectrum is a smooth invented scan of n points.
func testSpectrum(n int, seed uint64) *Spectrum {
	r := rand.New(rand.NewPCG(seed, 1))
	wl := make([]float64, n)
	y := make([]float64, n)
	for i := range wl {
		wl[i] = 350 + float64(i)*0.5
		x := wl[i]
		y[i] = 0.8*math.Exp(-0.5*math.Pow((x-450)/30, 2)) + 0.3*math.Exp(-0.5*math.Pow((x-520)/15, 2)) + 0.001*r.NormFloat64()
	}
	return &Spectrum{Name: "test scan", Wavelengths: wl, Values: y, Quantity: Absorbance}
}

// TestJCAMPRoundTrip writes the same data as AFFN and compressed, reads
// both back and compares them with the original and each other.
func TestJCAMPRoundTrip(t *testing.T) {
	s := testSpectrum(701, 1)
	var affn, comp bytes.Buffer
	if err := WriteJCAMP(&affn, s, JCAMPOptions{}); err != nil {
		t.Fatal(err)
	}
	if err := WriteJCAMP(&comp, s, JCAMPOptions{Compressed: true}); err != nil {
		t.Fatal(err)
	}
	if comp.Len() >= affn.Len()/2 {
		t.Errorf("compressed %d bytes, AFFN %d: expected at least halving", comp.Len(), affn.Len())
	}
	for _, l := range strings.Split(comp.String(), "\n") {
		if len(l) > jcampLineMax {
			t.Errorf("line of %d characters: %q", len(l), l)
		}
	}
	a, err := ReadJCAMP(&affn, "affn.jdx", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	c, err := ReadJCAMP(&comp, "comp.jdx", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// AFFN keeps every bit of Y; X is rebuilt as FIRSTX + i*DELTAX, which
	// may differ from the original in the last bits.
	const xTol = 1e-12 // relative, on X rebuilt from FIRSTX/LASTX/NPOINTS
	// Compressed Y keeps jcampDigits significant digits of the largest
	// |Y|: the error is at most half a YFACTOR step.
	maxAbs := 0.0
	for _, v := range s.Values {
		maxAbs = max(maxAbs, math.Abs(v))
	}
	yTol := 0.5 * math.Pow(10, math.Floor(math.Log10(maxAbs))-(jcampDigits-1)) * (1 + 1e-9)
	for i := range s.Values {
		if a[0].Values[i] != s.Values[i] {
			t.Fatalf("AFFN Y[%d] = %v, want %v", i, a[0].Values[i], s.Values[i])
		}
		if d := math.Abs(c[0].Values[i] - s.Values[i]); d > yTol {
			t.Fatalf("compressed Y[%d] = %v, want %v within %g", i, c[0].Values[i], s.Values[i], yTol)
		}
		for _, got := range []float64{a[0].Wavelengths[i], c[0].Wavelengths[i]} {
			if math.Abs(got-s.Wavelengths[i]) > xTol*s.Wavelengths[i] {
				t.Fatalf("X[%d] = %v, want %v", i, got, s.Wavelengths[i])
			}
		}
	}
	if a[0].Name != s.Name || c[0].Quantity != Absorbance {
		t.Errorf("name %q quantity %v", a[0].Name, c[0].Quantity)
	}
}

func TestJCAMPWriteForms(t *testing.T) {
	// Flat data compress to DIF zero with DUP; the check line closes.
	s := &Spectrum{Name: "flat", Wavelengths: []float64{400, 401, 402, 403}, Values: []float64{0.5, 0.5, 0.5, 0.5}, Quantity: PercentT}
	var b bytes.Buffer
	if err := WriteJCAMP(&b, s, JCAMPOptions{Compressed: true}); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	// 0.5 %T is written as transmittance 0.005 = 5 x 0.001 (the common
	// trailing zeros of 5000000 x 1e-9 dropped).
	for _, want := range []string{"##YUNITS=TRANSMITTANCE\n", "##YFACTOR=0.001\n", "\n400 E%U\n403 E\n##END="} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	// An uneven grid goes to XYPOINTS.
	s = &Spectrum{Name: "uneven", Wavelengths: []float64{400, 401, 403}, Values: []float64{1, 2, 3}, Quantity: Absorbance}
	b.Reset()
	if err := WriteJCAMP(&b, s, JCAMPOptions{Compressed: true}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "##XYPOINTS=(XY..XY)\n400, 1\n401, 2\n403, 3\n") {
		t.Errorf("uneven:\n%s", b.String())
	}
	got, err := ReadJCAMP(&b, "u.jdx", ReadOptions{})
	if err != nil || !equalFloats(got[0].Wavelengths, s.Wavelengths) || !equalFloats(got[0].Values, s.Values) {
		t.Errorf("uneven read back: %v %v", got, err)
	}
	// NaN never reaches output.
	s.Values[1] = math.NaN()
	if err := WriteJCAMP(&b, s, JCAMPOptions{}); err == nil {
		t.Error("NaN written")
	}
}

// Compressed output states FIRSTY, MINY and MAXY as the decimal numbers
// its table holds (integer × YFACTOR), in their shortest form: 8378 ×
// 1e-05 is "0.08378", never the float64 product 0.08378000000000001. The
// reader checks FIRSTY against the first Y times YFACTOR and accepts it.
func TestJCAMPCompressedHeaderNumbers(t *testing.T) {
	s := &Spectrum{Name: "short", Wavelengths: []float64{400, 401, 402, 403},
		Values: []float64{0.08378, 0.35, 0.07, 0.2}, Quantity: Absorbance}
	var b bytes.Buffer
	if err := WriteJCAMP(&b, s, JCAMPOptions{Compressed: true}); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{"##YFACTOR=1e-05\n", "##FIRSTY=0.08378\n", "##MINY=0.07\n", "##MAXY=0.35\n"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	got, err := ReadJCAMP(strings.NewReader(out), "short.jdx", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range got[0].Values {
		if math.Abs(v-s.Values[i]) > 1e-12 {
			t.Errorf("Y[%d] = %v, want %v", i, v, s.Values[i])
		}
	}
}

func TestSQZEncoding(t *testing.T) {
	for _, c := range []struct {
		v   int64
		dif bool
		s   string
	}{{0, false, "@"}, {123, false, "A23"}, {-25, false, "b5"}, {0, true, "%"}, {12, true, "J2"}, {-9, true, "r"}, {-10, true, "j0"}} {
		if got := string(appendSQZ(nil, c.v, c.dif)); got != c.s {
			t.Errorf("appendSQZ(%d, %v) = %q, want %q", c.v, c.dif, got, c.s)
		}
	}
	for _, c := range []struct {
		n int
		s string
	}{{1, "S"}, {2, "T"}, {8, "Z"}, {9, "s"}, {12, "S2"}, {95, "s5"}} {
		if got := string(appendDUP(nil, c.n)); got != c.s {
			t.Errorf("appendDUP(%d) = %q, want %q", c.n, got, c.s)
		}
	}
}

func ExampleReadJCAMP() {
	in := `##TITLE=example
##JCAMP-DX=4.24
##DATA TYPE=UV/VIS SPECTRUM
##XUNITS=NANOMETERS
##YUNITS=ABSORBANCE
##XFACTOR=1
##YFACTOR=0.001
##FIRSTX=400
##LASTX=404
##NPOINTS=5
##XYDATA=(X++(Y..Y))
400 A23J2T%T
404 A47
##END=
`
	ss, err := ReadJCAMP(strings.NewReader(in), "example.jdx", ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	s := ss[0]
	fmt.Println(s.Name, s.Quantity, s.Wavelengths, s.Values)
	// Output: example absorbance [400 401 402 403 404] [0.123 0.135 0.147 0.147 0.147]
}

// TestJCAMPContinuationLinear: a record continued over many lines costs
// memory in proportion to its length, not to the square of its number of
// lines. Adding each continuation line to the value string copied the
// value so far every time: for the 20,000 lines of 10 bytes here that
// allocated about n²·11/2 = 2.2 GB (and 200,000 lines took close to a
// minute). The check counts the bytes the reader allocates, so it does
// not depend on the speed of the machine: linear reading allocates a few
// times the input's 220 kB; the bound below leaves room for the rest of
// the reader (buffers, the table, the spectrum) and is still a hundred
// times below the quadratic cost.
func TestJCAMPContinuationLinear(t *testing.T) {
	const (
		lines = 20000
		// maxAllocPerInputByte bounds the bytes allocated per byte of
		// input: see above.
		maxAllocPerInputByte = 50
	)
	var b strings.Builder
	b.WriteString("##TITLE=t\n##JCAMP-DX=4.24\n##DATA TYPE=UV/VIS SPECTRUM\n##COMMENTS=first\n")
	for range lines {
		b.WriteString("continued\n")
	}
	b.WriteString("##XUNITS=NM\n##YUNITS=ABSORBANCE\n##FIRSTX=400\n##LASTX=402\n##NPOINTS=3\n##XYDATA=(X++(Y..Y))\n400 1 2 3\n##END=\n")
	in := b.String()
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	ss, err := ReadJCAMP(strings.NewReader(in), "long.jdx", ReadOptions{})
	runtime.ReadMemStats(&after)
	if err != nil || len(ss) != 1 {
		t.Fatalf("long comment: %v", err)
	}
	alloc := after.TotalAlloc - before.TotalAlloc
	t.Logf("%d continuation lines (%d bytes): %d bytes allocated", lines, len(in), alloc)
	if alloc > uint64(maxAllocPerInputByte*len(in)) {
		t.Errorf("reading %d bytes with %d continuation lines allocated %d bytes, more than %d per input byte: the record value grows quadratically",
			len(in), lines, alloc, maxAllocPerInputByte)
	}
}

// A JCAMP-DX title that names no sample ("Sample") gives way to the file's
// stem; a real title is kept.
func TestJCAMPGenericTitle(t *testing.T) {
	head := "##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=0.001\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n"
	for title, want := range map[string]string{"Sample": "t", "lot 7": "lot 7"} {
		in := strings.Replace(jdx(head, "400 500 400\n"), "##TITLE=t", "##TITLE="+title, 1)
		s, _, err := readJ(t, in, ReadOptions{})
		if err != nil || s.Name != want {
			t.Errorf("title %q: name %v, %v; want %q", title, s, err, want)
		}
	}
}

// JCAMP-DX values read as absorbance that look like percent transmittance
// are refused, naming the fix.
func TestJCAMPPercentTAsAbsorbance(t *testing.T) {
	head := "##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=401\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n"
	_, _, err := readJ(t, jdx(head, "400 95 80\n"), ReadOptions{})
	if !errors.Is(err, ErrMisread) || !strings.HasPrefix(err.Error(), "t.jdx:") || !strings.Contains(err.Error(), "--quantity %T") {
		t.Errorf("%%T as absorbance: %v", err)
	}
}
