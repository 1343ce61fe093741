package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/spectrum"
)

func readOne(t *testing.T, path string) *spectrum.Spectrum {
	t.Helper()
	ss, err := spectrum.ReadFile(path, spectrum.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return ss[0]
}

func TestConvertRoundTrip(t *testing.T) {
	dir := t.TempDir()
	src := filepath.Join(spectraDir, "same-scan.csv")
	jdx := filepath.Join(dir, "scan.jdx")
	back := filepath.Join(dir, "back.tsv")
	if _, errOut, code := run(t, "convert", src, "-o", jdx, "--to", "jcamp-compressed"); code != 0 {
		t.Fatalf("to jcamp: %d %s", code, errOut)
	}
	data, _ := os.ReadFile(jdx)
	// The scan has 4 decimals: the writer drops the common zeros.
	if !strings.Contains(string(data), "##XYDATA=(X++(Y..Y))") || !strings.Contains(string(data), "##YFACTOR=0.0001\n") {
		t.Errorf("compressed output:\n%s", data)
	}
	if _, errOut, code := run(t, "convert", jdx, "-o", back); code != 0 {
		t.Fatalf("to tsv: %d %s", code, errOut)
	}
	a, b := readOne(t, src), readOne(t, back)
	// Values have 4 decimals, which compressed JCAMP-DX keeps as integers
	// times YFACTOR=0.0001: they come back to rounding.
	const tol = 1e-15
	for i := range a.Values {
		if d := a.Values[i] - b.Values[i]; d > tol || d < -tol || a.Wavelengths[i] != b.Wavelengths[i] {
			t.Fatalf("point %d: (%g, %g) -> (%g, %g)", i, a.Wavelengths[i], a.Values[i], b.Wavelengths[i], b.Values[i])
		}
	}
}

func TestConvertToAbsorbance(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "pt.csv")
	os.WriteFile(in, []byte("nm,%T\n400,100\n401,10\n402,1\n"), 0o644)
	out, _, code := run(t, "convert", in, "-o", "-", "--to", "csv", "--as", "absorbance")
	// A = 2 - log10(%T): 100 -> 0, 10 -> 1, 1 -> 2 (definition of absorbance).
	if code != 0 || !strings.Contains(out, "pt [absorbance]\n400,0\n401,1\n402,2\n") {
		t.Errorf("--as absorbance: code %d\n%s", code, out)
	}
	// 0 %T stops the conversion, naming file and wavelength; nothing written.
	zero := filepath.Join(spectraDir, "bad", "zero-percent-t.csv")
	target := filepath.Join(dir, "z.csv")
	_, errOut, code := run(t, "convert", zero, "-o", target, "--as", "absorbance")
	if code != exitFailure || !strings.Contains(errOut, zero) || !strings.Contains(errOut, "402 nm") {
		t.Errorf("0 %%T: code %d, stderr %q", code, errOut)
	}
	if _, err := os.Stat(target); !os.IsNotExist(err) {
		t.Errorf("output written despite the error")
	}
	// Without --as the reading is kept as it is: 0 %T is written as a
	// transmittance of 0.
	out, errOut, code = run(t, "convert", zero, "-o", "-", "--to", "jcamp")
	if code != 0 || !strings.Contains(out, "##YUNITS=TRANSMITTANCE\n") || !strings.Contains(out, "400 0.5 0.1 0 0.05\n") {
		t.Errorf("0 %%T kept as transmittance: code %d, stderr %q\n%s", code, errOut, out)
	}
}

func TestConvertPickAndErrors(t *testing.T) {
	dir := t.TempDir()
	wide := filepath.Join(spectraDir, "same-wide.tsv")
	_, errOut, code := run(t, "convert", wide, "-o", filepath.Join(dir, "w.jdx"))
	if code != exitUsage || !strings.Contains(errOut, "holds 3 spectra") {
		t.Errorf("wide to jcamp: code %d, %q", code, errOut)
	}
	out := filepath.Join(dir, "b.jdx")
	if _, errOut, code := run(t, "convert", wide, "-o", out, "--spectrum", "mix B"); code != 0 {
		t.Fatalf("--spectrum name: %d %s", code, errOut)
	}
	if s := readOne(t, out); s.Name != "mix B" || s.Len() != 41 {
		t.Errorf("picked %q with %d points", s.Name, s.Len())
	}
	if _, _, code := run(t, "convert", wide, "-o", out, "--spectrum", "3"); code != 0 || readOne(t, out).Name != "blank" {
		t.Errorf("--spectrum 3: code %d", code)
	}
	for _, args := range [][]string{
		{"convert", wide, "-o", out, "--spectrum", "nope"},
		{"convert", wide, "-o", out, "--spectrum", "9"},
		{"convert", wide, "-o", filepath.Join(dir, "x.xyz")},
		{"convert", wide, "-o", out, "--to", "xls"},
		{"convert", wide, "-o", out, "--as", "%T"},
		{"convert", wide},
	} {
		if _, errOut, code := run(t, args...); code != exitUsage {
			t.Errorf("%q: code %d, want %d (%s)", args, code, exitUsage, errOut)
		}
	}
	bad := filepath.Join(spectraDir, "bad", "dif-check.jdx")
	if _, errOut, code := run(t, "convert", bad, "-o", filepath.Join(dir, "c.csv")); code != exitFailure || !strings.Contains(errOut, bad+":13:5:") {
		t.Errorf("bad input: code %d, %q", code, errOut)
	}
}
