package spectrum

import (
	"bytes"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
	"unsafe"
)

const specDir = "../testdata/spectra"

// badFiles is the catalogue of files every reader must refuse with a
// message naming the file, the line and (where it applies) the column.
var badFiles = []struct {
	file     string
	line     int
	col      int    // 0: no column expected
	contains string // part of the message
	is       error  // sentinel the error must wrap, if any
}{
	{"empty.csv", 1, 0, "empty", ErrEmpty},
	{"header-only.csv", 1, 0, "no numeric rows", ErrEmpty},
	{"ragged.csv", 4, 3, "ragged row", nil},
	{"text-in-number.csv", 4, 2, `not a number: "O.12"`, nil},
	{"nan.tsv", 3, 2, "not a finite number", nil},
	{"inf.csv", 4, 2, "not a finite number", nil},
	{"duplicate-wavelength.csv", 4, 1, "duplicate wavelength 401", errGrid},
	{"non-monotonic.csv", 5, 1, "breaks the ascending order", errGrid},
	{"mixed-decimal.csv", 4, 1, "mixed decimal conventions", nil},
	{"empty-field.csv", 4, 2, "empty field", nil},
	{"non-utf8.csv", 4, 2, `unexpected "\xb7"`, nil},
	{"truncated.jdx", 13, 0, "without ##END=", nil},
	{"dif-check.jdx", 13, 5, "Y-value check failed", errYCheck},
	{"lying-npoints.jdx", 10, 0, "##NPOINTS=9 disagrees with the data: the table (lines 12-14) holds 7 decoded points from ##FIRSTX=400 to ##LASTX=408", nil},
	// 6 points 2 nm apart from 400 to 410; NPOINTS=8 would put the
	// second line's 406 at 400 + 3 x 10/7 = 404.286.
	{"npoints-vs-step.jdx", 10, 0, "##NPOINTS=8 disagrees with ##FIRSTX=400, ##LASTX=410 and the data: the table holds 6 decoded points (a step of 2 from FIRSTX to LASTX), and line 13 starts at X 406 where 8 points would put 404.286", nil},
	{"multi-block.jdx", 12, 0, "second block", errNotSupported},
	{"nmr.jdx", 3, 0, "NMR", errNotSupported},
	{"link.jdx", 3, 0, "compound file", errNotSupported},
}

func TestBadFiles(t *testing.T) {
	for _, c := range badFiles {
		t.Run(c.file, func(t *testing.T) {
			path := filepath.Join(specDir, "bad", c.file)
			ss, err := ReadFile(path, ReadOptions{})
			if err == nil {
				t.Fatalf("ReadFile(%s) = %d spectra, want an error", c.file, len(ss))
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("ReadFile(%s) error %T %q, want *ParseError", c.file, err, err)
			}
			if pe.File != path || pe.Line != c.line || pe.Column != c.col {
				t.Errorf("ReadFile(%s) at %s:%d:%d, want %s:%d:%d (%v)", c.file, pe.File, pe.Line, pe.Column, path, c.line, c.col, err)
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, path+":") || !strings.Contains(msg, c.contains) {
				t.Errorf("ReadFile(%s) message %q, want prefix %q and %q", c.file, msg, path+":", c.contains)
			}
			if c.is != nil && !errors.Is(err, c.is) {
				t.Errorf("ReadFile(%s) = %v, want errors.Is %v", c.file, err, c.is)
			}
		})
	}
}

// TestZeroPercentT: the file reads, but converting 0 %T to absorbance is
// an error naming file and wavelength (A = -log10 T is infinite at T = 0;
// that such a sample cannot be read and must be diluted is common
// practice).
func TestZeroPercentT(t *testing.T) {
	path := filepath.Join(specDir, "bad", "zero-percent-t.csv")
	ss, err := ReadFile(path, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if ss[0].Quantity != PercentT {
		t.Fatalf("quantity = %v, want %%T", ss[0].Quantity)
	}
	err = ss[0].ToAbsorbance()
	if !errors.Is(err, errTooDark) {
		t.Fatalf("ToAbsorbance = %v, want errTooDark", err)
	}
	if msg := err.Error(); !strings.Contains(msg, path) || !strings.Contains(msg, "402 nm") || !strings.Contains(msg, "dilute") {
		t.Errorf("message %q should name %s, 402 nm and say dilute", msg, path)
	}
	if ss[0].Values[2] != 0 || ss[0].Quantity != PercentT {
		t.Errorf("a failed conversion changed the spectrum")
	}
}

func TestBOMAndCRLF(t *testing.T) {
	ss, err := ReadFile(filepath.Join(specDir, "bom-crlf.csv"), ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	s := ss[0]
	if s.Quantity != Absorbance || len(s.Values) != 3 || s.Values[2] != 0.12 || s.Wavelengths[0] != 400 || s.Name != "bom-crlf" {
		t.Errorf("got %+v", *s)
	}
}

// TestSameNumbers: one scan stored as a two-column CSV, a semicolon export
// with decimal commas (descending, with a preamble), a wide table and a
// compressed JCAMP-DX file (all written by testdata/spectra/gen-same.py)
// loads to the same numbers.
func TestSameNumbers(t *testing.T) {
	load := func(name string) []*Spectrum {
		t.Helper()
		var warns []string
		ss, err := ReadFile(filepath.Join(specDir, name), ReadOptions{Warn: func(m string) { warns = append(warns, m) }})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(warns) > 0 {
			t.Errorf("%s: unexpected warnings %q", name, warns)
		}
		return ss
	}
	ref := load("same-scan.csv")[0]
	if ref.Len() != 41 || ref.Wavelengths[0] != 400 || ref.Wavelengths[40] != 600 {
		t.Fatalf("reference scan: %d points %g-%g", ref.Len(), ref.Wavelengths[0], ref.Wavelengths[ref.Len()-1])
	}
	eu := load("same-scan-eu.csv")[0]
	wide := load("same-wide.tsv")
	jdx := load("same-scan.jdx")[0]
	if len(wide) != 3 || wide[1].Name != "mix B" || wide[0].Name != "mix A" || wide[2].Name != "blank" {
		t.Fatalf("wide table names: %v", names(wide))
	}
	if jdx.Name != "same scan" {
		t.Errorf("JCAMP-DX title = %q", jdx.Name)
	}
	// The text files hold the same decimal strings, so they must agree
	// exactly; JCAMP-DX rebuilds X from FIRSTX + i*DELTAX and Y as an
	// integer times YFACTOR, which may differ in the last bit.
	const jcampTol = 1e-12
	for _, c := range []struct {
		name string
		s    *Spectrum
		tol  float64
	}{{"semicolon", eu, 0}, {"wide", wide[1], 0}, {"jcamp", jdx, jcampTol}} {
		if c.s.Len() != ref.Len() || c.s.Quantity != Absorbance {
			t.Errorf("%s: %d points, %v", c.name, c.s.Len(), c.s.Quantity)
			continue
		}
		for i := range ref.Values {
			if math.Abs(c.s.Wavelengths[i]-ref.Wavelengths[i]) > c.tol*ref.Wavelengths[i] ||
				math.Abs(c.s.Values[i]-ref.Values[i]) > c.tol {
				t.Errorf("%s point %d = (%g, %g), want (%g, %g)", c.name, i, c.s.Wavelengths[i], c.s.Values[i], ref.Wavelengths[i], ref.Values[i])
			}
		}
	}
	// Spectra of one table share the wavelengths and one backing array.
	if &wide[0].Wavelengths[0] != &wide[2].Wavelengths[0] {
		t.Error("wide-table spectra do not share their wavelengths")
	}
	if cap(wide[0].Values) != len(wide[0].Values) {
		t.Error("a spectrum's Values may grow into its neighbour's")
	}
	if unsafe.Add(unsafe.Pointer(&wide[0].Values[0]), 8*len(wide[0].Values)) != unsafe.Pointer(&wide[1].Values[0]) {
		t.Error("wide-table values do not come from one backing array")
	}
}

func parseFloatRef(s string) (float64, error) { return strconv.ParseFloat(s, 64) }

func names(ss []*Spectrum) []string {
	var out []string
	for _, s := range ss {
		out = append(out, s.Name)
	}
	return out
}

func TestToAbsorbanceValues(t *testing.T) {
	// A = -log10(T) = 2 - log10(%T), the definition of decadic absorbance.
	for _, c := range []struct {
		q    Quantity
		v, a float64
	}{
		{PercentT, 100, 0}, {PercentT, 10, 1}, {PercentT, 1, 2},
		{Transmittance, 1, 0}, {Transmittance, 0.1, 1}, {Transmittance, 0.01, 2},
		{Absorbance, 0.5, 0.5},
	} {
		got, err := ToAbsorbance(c.q, c.v)
		if err != nil || math.Abs(got-c.a) > 1e-15 {
			t.Errorf("ToAbsorbance(%v, %g) = %g, %v; want %g", c.q, c.v, got, err, c.a)
		}
	}
	// 0 %T cannot be read (common practice): an error, never +Inf.
	for _, c := range []struct {
		q Quantity
		v float64
	}{{PercentT, 0}, {PercentT, -1}, {Transmittance, 0}, {PercentT, math.NaN()}} {
		if got, err := ToAbsorbance(c.q, c.v); !errors.Is(err, errTooDark) {
			t.Errorf("ToAbsorbance(%v, %g) = %g, %v; want errTooDark", c.q, c.v, got, err)
		}
	}
}

func readString(t *testing.T, in string, opt ReadOptions) ([]*Spectrum, []string) {
	t.Helper()
	var warns []string
	opt.Warn = func(m string) { warns = append(warns, m) }
	ss, err := ReadDelimited(strings.NewReader(in), "in.txt", opt)
	if err != nil {
		t.Fatalf("ReadDelimited(%q): %v", in, err)
	}
	return ss, warns
}

func TestDialects(t *testing.T) {
	want := []float64{0.5, 0.25, 0.125}
	for _, c := range []struct {
		name, in string
		q        Quantity
	}{
		{"comma", "nm,A\n400,0.5\n401,0.25\n402,0.125\n", Absorbance},
		{"tab", "nm\tabsorbance\n400\t0.5\n401\t0.25\n402\t0.125\n", Absorbance},
		{"blanks", "nm   A\n  400   0.5\n401 0.25\t\n402\t 0.125\n", Absorbance},
		{"blanks decimal comma", "nm %T\n400,0 0,5\n401,0 0,25\n402 0,125\n", PercentT},
		{"semicolon decimal comma", "nm;T\n400;0,5\n401;0,25\n402;0,125\n", Transmittance},
		{"quoted", "\"Wavelength, nm\",\"Sample (A)\"\n\"400\",\"0.5\"\n400.5e0,\"0.25\"\n402,.125\n", Absorbance},
		{"trailing delimiter", "nm,absorbance,\n400,0.5,\n401,0.25,\n402,0.125,\n", Absorbance},
		{"comments and preamble", "# exported\nInstrument X\n\n#c\nnm, % transmittance\n400, 0.5\n# mid comment\n\n401, 0.25\n402, 0.125\n\n", PercentT},
		{"descending", "nm,A\n402,0.125\n401,0.25\n400,0.5\n", Absorbance},
		{"exponents", "nm,A\n4e2,5E-1\n4.01e+2,2.5e-1\n402,1.25e-1\n", Absorbance},
	} {
		t.Run(c.name, func(t *testing.T) {
			ss, warns := readString(t, c.in, ReadOptions{})
			if len(ss) != 1 {
				t.Fatalf("%d spectra", len(ss))
			}
			s := ss[0]
			if s.Quantity != c.q {
				t.Errorf("quantity %v, want %v (warnings %q)", s.Quantity, c.q, warns)
			}
			if len(s.Values) != 3 {
				t.Fatalf("values %v", s.Values)
			}
			for i, w := range want {
				wl := []float64{400, 401, 402}[i]
				if c.name == "quoted" && i == 1 {
					wl = 400.5
				}
				if s.Values[i] != w || s.Wavelengths[i] != wl {
					t.Errorf("point %d = (%g, %g), want (%g, %g)", i, s.Wavelengths[i], s.Values[i], wl, w)
				}
			}
		})
	}
}

func TestQuantityWarnings(t *testing.T) {
	// No quantity word: absorbance, said on the warning channel.
	ss, warns := readString(t, "400 0.5\n401 0.4\n", ReadOptions{})
	if ss[0].Quantity != Absorbance || len(warns) != 1 || !strings.Contains(warns[0], "reading absorbance") || !strings.HasPrefix(warns[0], "in.txt: ") {
		t.Errorf("unstated: %v, warnings %q", ss[0].Quantity, warns)
	}
	// Values that look like %T read as absorbance: a loud warning.
	// %T-looking values read as absorbance are refused, naming the fix.
	for _, in := range []string{"nm,sample\n400,95\n401,80.5\n402,40\n403,12\n", "nm,A\n400,95\n401,80\n"} {
		_, err := ReadDelimited(strings.NewReader(in), "in.txt", ReadOptions{})
		if !errors.Is(err, ErrMisread) || !strings.HasPrefix(err.Error(), "in.txt:2:2: ") || !strings.Contains(err.Error(), "--quantity %T") ||
			!strings.Contains(err.Error(), "percent transmittance") {
			t.Errorf("%%T-looking values %q: %v", in, err)
		}
	}
	// A header word wins over the option, with a warning naming the
	// file.
	ss, warns = readString(t, "nm,A\n400,0.95\n401,0.8\n", ReadOptions{Quantity: PercentT})
	if ss[0].Quantity != Absorbance || len(warns) != 1 || !strings.HasPrefix(warns[0], "in.txt: ") ||
		!strings.Contains(warns[0], "states absorbance") || !strings.Contains(warns[0], "not the %T requested") {
		t.Errorf("header over option: %v, %q", ss[0].Quantity, warns)
	}
	ss, warns = readString(t, "nm,s1 [%T],s2 [%T]\n400,95,90\n401,80,70\n", ReadOptions{Quantity: Absorbance})
	if ss[0].Quantity != PercentT || ss[1].Quantity != PercentT || len(warns) != 1 || !strings.Contains(warns[0], "columns 2, 3") {
		t.Errorf("%%T header, absorbance option: %v %v, %q", ss[0].Quantity, ss[1].Quantity, warns)
	}
	// Only the columns that do not say take the option.
	ss, warns = readString(t, "nm,s1 [absorbance],s2 [%T]\n400,0.5,90\n401,0.4,70\n", ReadOptions{Quantity: Absorbance})
	if ss[0].Quantity != Absorbance || ss[1].Quantity != PercentT || len(warns) != 1 || !strings.Contains(warns[0], "column 3") {
		t.Errorf("mixed header: %v %v, %q", ss[0].Quantity, ss[1].Quantity, warns)
	}
	// The option agreeing with the header: no warning.
	ss, warns = readString(t, "nm,%T\n400,95\n401,80\n", ReadOptions{Quantity: PercentT})
	if ss[0].Quantity != PercentT || len(warns) != 0 {
		t.Errorf("agreeing option: %v, %q", ss[0].Quantity, warns)
	}
	// The option alone: no warning.
	ss, warns = readString(t, "400 95\n401 80\n", ReadOptions{Quantity: PercentT})
	if ss[0].Quantity != PercentT || len(warns) != 0 {
		t.Errorf("option: %v, %q", ss[0].Quantity, warns)
	}
	// Transmittance fraction that looks like percent.
	_, warns = readString(t, "nm,T\n400,95\n401,80\n", ReadOptions{})
	if len(warns) != 1 || !strings.Contains(warns[0], "look like percent") {
		t.Errorf("fraction: %q", warns)
	}
}

// TestLoneLetterColumns: a lone "A" heads the values of a two-column file
// (absorbance) but names a sample among several columns, unless every
// column repeats it.
func TestLoneLetterColumns(t *testing.T) {
	for _, c := range []struct {
		in    string
		names []string
		qs    []Quantity
		warns int
	}{
		{"nm,A\n400,0.5\n401,0.4\n", []string{"in"}, []Quantity{Absorbance}, 0},
		{"nm,a\n400,0.5\n401,0.4\n", []string{"in"}, []Quantity{Absorbance}, 0},
		{"nm,T\n400,0.5\n401,0.4\n", []string{"in"}, []Quantity{Transmittance}, 0},
		{"nm,a,b,c\n400,0.5,0.1,0.2\n401,0.4,0.1,0.2\n", []string{"a", "b", "c"}, []Quantity{Absorbance, Absorbance, Absorbance}, 1},
		{"nm,A,B\n400,0.5,0.1\n401,0.4,0.1\n", []string{"A", "B"}, []Quantity{Absorbance, Absorbance}, 1},
		{"nm,A,A\n400,0.5,0.1\n401,0.4,0.1\n", []string{"in.txt#col2", "in.txt#col3"}, []Quantity{Absorbance, Absorbance}, 0},
		{"nm,A [%T],B [%T]\n400,50,60\n401,40,60\n", []string{"A", "B"}, []Quantity{PercentT, PercentT}, 0},
	} {
		ss, warns := readString(t, c.in, ReadOptions{})
		if len(ss) != len(c.names) || len(warns) != c.warns {
			t.Errorf("%q: %d spectra, warnings %q", c.in, len(ss), warns)
			continue
		}
		for i, s := range ss {
			if s.Name != c.names[i] || s.Quantity != c.qs[i] {
				t.Errorf("%q: spectrum %d = %q %v, want %q %v", c.in, i, s.Name, s.Quantity, c.names[i], c.qs[i])
			}
		}
	}
}

func TestHeaderWords(t *testing.T) {
	for _, c := range []struct {
		cell string
		q    Quantity
		name string
	}{
		{"Absorbance", Absorbance, ""},
		{"ABS", Absorbance, ""},
		{"A", Absorbance, ""},
		{"A1", Unstated, "A1"},
		{"Sample A", Unstated, "Sample A"},
		{"std 1 (A)", Absorbance, "std 1"},
		{"std 1 [absorbance]", Absorbance, "std 1"},
		{"%T", PercentT, ""},
		{"T%", PercentT, ""},
		{"Transmittance (%)", PercentT, ""},
		{"percent transmittance", PercentT, ""},
		{"trans-isomer [%T]", PercentT, "trans-isomer"},
		{"T", Transmittance, ""},
		{"transmittance", Transmittance, ""},
		{"dye T", Unstated, "dye T"},
		{"x [transmittance]", Transmittance, "x"},
		{"A!A [absorbance]", Absorbance, "A!A"}, // found by FuzzReadDelimited
		{"Absorbance (A)", Absorbance, ""},
		{"", Unstated, ""},
	} {
		q, name := cellQuantityAndName(c.cell)
		if q != c.q || name != c.name {
			t.Errorf("cellQuantityAndName(%q) = %v, %q; want %v, %q", c.cell, q, name, c.q, c.name)
		}
	}
}

func TestWideTableNames(t *testing.T) {
	ss, _ := readString(t, "400,0.1,0.2,0.3\n401,0.4,0.5,0.6\n", ReadOptions{Quantity: Absorbance})
	if got := names(ss); strings.Join(got, "|") != "in.txt#col2|in.txt#col3|in.txt#col4" {
		t.Errorf("names %q", got)
	}
	if ss[1].Source.Column != 3 || ss[1].Source.Line != 1 || ss[1].Values[1] != 0.5 {
		t.Errorf("provenance %+v values %v", ss[1].Source, ss[1].Values)
	}
	// Header with a different cell count: names fall back, with a warning.
	var warns []string
	ss, err := ReadDelimited(strings.NewReader("nm,a,b\n400,0.1,0.2,0.3\n401,0.4,0.5,0.6\n"), "w.csv", ReadOptions{Quantity: Absorbance, Warn: func(m string) { warns = append(warns, m) }})
	if err != nil || ss[0].Name != "w.csv#col2" || len(warns) != 1 {
		t.Errorf("mismatched header: %v %q %q", err, names(ss), warns)
	}
}

func TestWavelengthUnits(t *testing.T) {
	// 25000 cm-1 = 400 nm, 20000 cm-1 = 500 nm (lambda/nm = 1e7 / (nu/cm-1)).
	ss, _ := readString(t, "wavenumber (cm-1),A\n25000,0.1\n20000,0.2\n", ReadOptions{})
	if w := ss[0].Wavelengths; w[0] != 400 || w[1] != 500 || ss[0].Values[0] != 0.1 {
		t.Errorf("cm-1: %v %v", w, ss[0].Values)
	}
	ss, _ = readString(t, "wavelength (µm),A\n0.4,0.1\n0.5,0.2\n", ReadOptions{})
	if w := ss[0].Wavelengths; w[0] != 400 || w[1] != 500 {
		t.Errorf("µm: %v", w)
	}
}

func TestLimits(t *testing.T) {
	long := "400," + strings.Repeat("1", 200) + "\n401,1\n"
	_, err := ReadDelimited(strings.NewReader(long), "long.csv", ReadOptions{MaxLineBytes: 100})
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 1 || !strings.Contains(err.Error(), "longer than 100 bytes") {
		t.Errorf("long line: %v", err)
	}
	wide := "400" + strings.Repeat(",1", 20) + "\n"
	_, err = ReadDelimited(strings.NewReader(wide+wide), "wide.csv", ReadOptions{MaxColumns: 10})
	if !errors.As(err, &pe) || pe.Line != 1 || !strings.Contains(err.Error(), "21 columns, more than the 10") {
		t.Errorf("wide: %v", err)
	}
	_, err = ReadDelimited(bytes.NewReader([]byte{0xFF, 0xFE, '4', 0, '0', 0}), "u16.txt", ReadOptions{})
	if err == nil || !strings.Contains(err.Error(), "UTF-16") {
		t.Errorf("UTF-16: %v", err)
	}
	_, err = ReadDelimited(strings.NewReader("nm,A\n400,1\n"), "one.csv", ReadOptions{})
	if !errors.As(err, &pe) || pe.Line != 2 || !errors.Is(err, ErrEmpty) {
		t.Errorf("one row: %v", err)
	}
}

func TestReadFileErrors(t *testing.T) {
	dir := t.TempDir()
	_, err := ReadFile(dir, ReadOptions{})
	if err == nil || !strings.Contains(err.Error(), dir) || !strings.Contains(err.Error(), "directory") {
		t.Errorf("directory: %v", err)
	}
	missing := filepath.Join(dir, "nope.csv")
	_, err = ReadFile(missing, ReadOptions{})
	if err == nil || !strings.Contains(err.Error(), missing) || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing: %v", err)
	}
	// Detection by content: a JCAMP-DX file with a .csv name.
	p := filepath.Join(dir, "x.csv")
	data, err := os.ReadFile(filepath.Join(specDir, "same-scan.jdx"))
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, append([]byte("\n  \n"), data...), 0o644); err != nil {
		t.Fatal(err)
	}
	ss, err := ReadFile(p, ReadOptions{})
	if err != nil || ss[0].Name != "same scan" {
		t.Errorf("detection: %v", err)
	}
}

func TestNumberParser(t *testing.T) {
	// Every accepted spelling must give exactly what strconv.ParseFloat
	// gives for the same number with a decimal point.
	for _, s := range []string{"0", "-0", "1", "+1", "0.1", ".5", "5.", "123456789012345678", "1234567890123456789012",
		"0.000000000000000000000000001", "9007199254740993", "1e22", "1e23", "1.7976931348623157e308", "4.9e-324",
		"2.2250738585072014e-308", "0.30000000000000004", "-12.5e-3", "3.14159265358979323846264338327950288"} {
		want, err := parseFloatRef(s)
		if err != nil {
			t.Fatal(err)
		}
		got, _, err := parseNumber([]byte(s), false)
		if err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("parseNumber(%q) = %v, %v; want %v", s, got, err, want)
		}
	}
	for _, s := range []string{"", "-", ".", "e5", "1e", "1e+", "NaN", "inf", "0x1p3", "1_000", "1..2", "1.2.3", "1e999", "1,5"} {
		if v, _, err := parseNumber([]byte(s), false); err == nil {
			t.Errorf("parseNumber(%q) = %v, want an error", s, v)
		}
	}
	if v, m, err := parseNumber([]byte("-1,25"), true); err != nil || v != -1.25 || m != ',' {
		t.Errorf("decimal comma: %v %q %v", v, m, err)
	}
}

func TestFirstRowMixedMarks(t *testing.T) {
	// The first data row mixes a decimal point and a decimal comma: an
	// error there, not a header.
	_, err := ReadDelimited(strings.NewReader("nm;A\n400.5;0,1\n401.5;0,2\n"), "m.csv", ReadOptions{})
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 2 || pe.Column != 2 || !errors.Is(err, ErrMixedMark) {
		t.Errorf("mixed first row: %v", err)
	}
}

func TestDetectFormat(t *testing.T) {
	for _, c := range []struct {
		head  string
		jcamp bool
	}{
		{"##TITLE=x\n", true},
		{"\ufeff\r\n  ##TITLE= x\r\n", true},
		{"## exported by a lab tool\n400,1\n", false},
		{"# comment\n##TITLE=x\n", false},
		{"400,1\n", false},
		{"", false},
	} {
		if got := looksJCAMP([]byte(c.head)); got != c.jcamp {
			t.Errorf("looksJCAMP(%q) = %v", c.head, got)
		}
	}
}

func TestLineEnds(t *testing.T) {
	for _, in := range []string{
		"nm,A\n400,1\n401,2\n",
		"nm,A\r\n400,1\r\n401,2\r\n",
		"nm,A\r400,1\r401,2\r",
		"nm,A\r400,1\r401,2",
		"nm,A\n400,1\r\n401,2",
	} {
		// iotest-like one-byte reads exercise every split point.
		for _, r := range []io.Reader{strings.NewReader(in), iotest.OneByteReader(strings.NewReader(in))} {
			ss, err := ReadDelimited(r, "le.csv", ReadOptions{})
			if err != nil || !equalFloats(ss[0].Values, []float64{1, 2}) {
				t.Errorf("line ends %q: %v %v", in, ss, err)
			}
		}
	}
	// Line numbers count CR-only lines.
	_, err := ReadDelimited(strings.NewReader("nm,A\r400,1\r401,x\r"), "le.csv", ReadOptions{})
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 3 {
		t.Errorf("CR-only error line: %v", err)
	}
}

// TestGenericHeaderNames: a value column headed by a word that names no
// sample ("Sample", "Intensity", "Value", "Wavelength (nm)", ...) takes the
// file's stem (two columns) or file#colN (a wide table); a real name is
// kept.
func TestGenericHeaderNames(t *testing.T) {
	for _, c := range []struct {
		in    string
		names []string
	}{
		{"nm,Sample\n400,0.5\n401,0.4\n", []string{"in"}},
		{"nm,Intensity\n400,0.5\n401,0.4\n", []string{"in"}},
		{"nm;Value [a.u.]\n400;0.5\n401;0.4\n", []string{"in"}},
		{"Wavelength (nm),Wavelength (nm)\n400,0.5\n401,0.4\n", []string{"in"}},
		{"nm,y\n400,0.5\n401,0.4\n", []string{"in"}},
		{"nm,SAMPLE,lot 7\n400,0.5,0.1\n401,0.4,0.1\n", []string{"in.txt#col2", "lot 7"}},
		{"nm,Sample 1\n400,0.5\n401,0.4\n", []string{"Sample 1"}},
	} {
		ss, _ := readString(t, c.in, ReadOptions{Quantity: Absorbance})
		var got []string
		for _, s := range ss {
			got = append(got, s.Name)
		}
		if strings.Join(got, "|") != strings.Join(c.names, "|") {
			t.Errorf("%q: names %q, want %q", c.in, got, c.names)
		}
	}
}

// TestDecimalCommaSplit: a comma-separated file whose numbers carry a
// decimal comma splits each number in two (whole numbers only, a column
// of zeros or a header that does not fit): refused naming file, line and
// the fix. Whole numbers under a header that fits are read.
func TestDecimalCommaSplit(t *testing.T) {
	for _, in := range []string{
		"400,0,123\n401,0,118\n402,0,097\n",
		"wavelength,absorbance\n400,0,123\n401,0,118\n",
		"nm,A\n400,1,123\n401,0,918\n",
	} {
		_, err := ReadDelimited(strings.NewReader(in), "dc.csv", ReadOptions{})
		if !errors.Is(err, ErrMisread) || !strings.HasPrefix(err.Error(), "dc.csv:") || !strings.Contains(err.Error(), "decimal comma") ||
			!strings.Contains(err.Error(), "semicolon or tab") {
			t.Errorf("%q: %v", in, err)
		}
	}
	for _, in := range []string{
		"nm,s1 [%T],s2 [%T]\n400,50,60\n401,40,60\n", // whole %T under a header that fits
		"nm;A\n400;0,123\n401;0,118\n",               // decimal comma with a semicolon: fine
		"400,0.1,0.2\n401,0.3,0.4\n",
	} {
		if _, err := ReadDelimited(strings.NewReader(in), "ok.csv", ReadOptions{}); err != nil {
			t.Errorf("%q: %v", in, err)
		}
	}
}

// TestPercentTAsAbsorbance: a dark sample's %T scan (bands below 5 %T,
// half the readings above) read as absorbance is refused too; absorbance
// up to the usual ceilings is not.
func TestPercentTAsAbsorbance(t *testing.T) {
	pct := "nm,s\n400,92\n401,60\n402,3.1\n403,0.8\n404,2.5\n405,40\n406,88\n"
	if _, err := ReadDelimited(strings.NewReader(pct), "p.csv", ReadOptions{}); !errors.Is(err, ErrMisread) {
		t.Errorf("dark %%T read as absorbance: %v", err)
	}
	if _, err := ReadDelimited(strings.NewReader(pct), "p.csv", ReadOptions{Quantity: PercentT}); err != nil {
		t.Errorf("dark %%T read as %%T: %v", err)
	}
	abs := "nm,s\n400,0.2\n401,1.5\n402,3.1\n403,4.2\n404,2.5\n405,0.4\n"
	if _, err := ReadDelimited(strings.NewReader(abs), "a.csv", ReadOptions{}); err != nil {
		t.Errorf("high absorbance: %v", err)
	}
}
