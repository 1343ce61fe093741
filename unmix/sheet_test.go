package unmix

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/spectrum"
)

// TestSampleSheetRobust: a sheet from a Windows spreadsheet (byte order
// mark, CRLF, semicolons and decimal commas) reads; an over-long line,
// a folder and a file too large to be a sheet are refused with the
// file named.
func TestSampleSheetRobust(t *testing.T) {
	ss, err := parseSampleSheet(strings.NewReader("\ufeffsample;dilution;path_cm\r\nA1;2,5;0,5\r\nB2;10;\r\n"), "win.csv")
	if err != nil {
		t.Fatal(err)
	}
	if f, ok := ss.lookup(&spectrum.Spectrum{Name: "A1"}); !ok || f.Dilution != 2.5 || f.PathCM != 0.5 {
		t.Errorf("A1: %+v %v", f, ok)
	}
	if f, ok := ss.lookup(&spectrum.Spectrum{Name: "B2"}); !ok || f.Dilution != 10 {
		t.Errorf("B2: %+v %v", f, ok)
	}
	// With commas separating fields, "2,5" is two fields, not 2.5.
	if _, err := parseSampleSheet(strings.NewReader("sample,dilution\nA,2.5.1\n"), "c.csv"); err == nil || !strings.HasPrefix(err.Error(), "c.csv:2:2:") {
		t.Errorf("bad number: %v", err)
	}
	long := "sample,dilution\nA," + strings.Repeat("1", maxSheetLine) + "\n"
	if _, err := parseSampleSheet(strings.NewReader(long), "long.csv"); err == nil || !strings.HasPrefix(err.Error(), "long.csv:2: line longer than 64 KiB") {
		t.Errorf("long line: %v", err)
	}
	dir := t.TempDir()
	if _, err := ReadSampleSheet(dir); err == nil || !strings.HasPrefix(err.Error(), dir+": the sample sheet is a folder; give the sheet file") {
		t.Errorf("folder: %v", err)
	}
	big := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(big, []byte("sample,dilution\nA,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(big, 2<<30); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	if _, err := ReadSampleSheet(big); err == nil || !strings.Contains(err.Error(), big+": the file is 2 GiB, more than the 64 MiB a sample sheet may take") {
		t.Errorf("2 GiB sheet: %v", err)
	}
}

// TestSampleSheetColumns: an unknown column (a misspelt path_cm) is
// refused naming sheet, line and column and listing the known columns; a
// note column is ignored; Match names the row used and Names lists them
// in sheet order.
func TestSampleSheetColumns(t *testing.T) {
	_, err := parseSampleSheet(strings.NewReader("sample,dilution,path\ns10,4,0.5\n"), "ss.csv")
	if err == nil || !strings.HasPrefix(err.Error(), `ss.csv:1:3: unknown column "path"`) || !strings.Contains(err.Error(), "sample, dilution, path_cm") {
		t.Errorf("unknown column: %v", err)
	}
	_, err = parseSampleSheet(strings.NewReader("sample,dilution,Dilution\ns10,4,5\n"), "ss.csv")
	if err == nil || !strings.HasPrefix(err.Error(), `ss.csv:1:3: column "dilution" given twice`) {
		t.Errorf("twice: %v", err)
	}
	ss, err := parseSampleSheet(strings.NewReader("# lab sheet\nnote,sample,dilution\nfirst,s10,4\n,s1O,2\n"), "ss.csv")
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(ss.names(), " "); got != "s10 s1O" {
		t.Errorf("names %q", got)
	}
	if ss.Line("s1O") != 4 {
		t.Errorf("line of s1O: %d", ss.Line("s1O"))
	}
	f, k, ok := ss.match(&spectrum.Spectrum{Source: spectrum.Source{File: "smp/s10.csv"}})
	if !ok || k != "s10" || f.Dilution != 4 {
		t.Errorf("match s10: %+v %q %v", f, k, ok)
	}
	if _, k, ok := ss.match(&spectrum.Spectrum{Name: "s1"}); ok || k != "" {
		t.Errorf("s1 matched %q", k)
	}
}

// TestSampleSheetStrict: the sample sheet reads its text as the standards
// sheet does (internal/sheet): a row with more or fewer fields than the
// header, and numbers outside the spectrum readers' syntax (hexadecimal,
// digit separators, Inf), are refused naming file:line:column; so is a
// sheet mixing decimal points and decimal commas.
func TestSampleSheetStrict(t *testing.T) {
	for _, c := range []struct{ text, want string }{
		{"sample,dilution,path_cm\nlot-101,2,5,1\n", "s.csv:2:4: row has 4 fields but the header names 3 columns"},
		{"sample,dilution,path_cm\nlot-101,2\n", "s.csv:2:3: row has 2 fields but the header names 3 columns"},
		{"sample,dilution\nA,0x1p3\n", `s.csv:2:2: dilution "0x1p3" is not a number`},
		{"sample,dilution\nA,1_0\n", `s.csv:2:2: dilution "1_0" is not a number`},
		{"sample,path_cm\nA,inf\n", `s.csv:2:2: path_cm "inf" is not a number`},
		{"sample;dilution\nA;2,5\nB;2.5\n", `s.csv:3:2: dilution "2.5": mixed decimal conventions`},
		{"sample,dilution\nA\"1,2\n", `s.csv:2:1: a " inside a field that is not quoted`},
	} {
		_, err := parseSampleSheet(strings.NewReader(c.text), "s.csv")
		if err == nil || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("parseSampleSheet(%q) error %v, want prefix %q", c.text, err, c.want)
		}
	}
	// Quoting as in CSV: a quoted name may hold the separator; notes and
	// comments columns are dropped like the standards sheet's.
	ss, err := parseSampleSheet(strings.NewReader("sample,dilution,notes\n\"mix 1, rerun\",4,\"diluted 1:4\"\n"), "s.csv")
	if err != nil {
		t.Fatal(err)
	}
	if f, ok := ss.lookup(&spectrum.Spectrum{Name: "mix 1, rerun"}); !ok || f.Dilution != 4 {
		t.Errorf("quoted name: %+v %v", f, ok)
	}
}

// TestSampleSheetLatin1: a sheet that is not UTF-8 is read as Latin-1, so
// its names match scans whose headers were read the same way, with a
// warning naming the line.
func TestSampleSheetLatin1(t *testing.T) {
	ss, err := parseSampleSheet(strings.NewReader("sample,dilution\nProbe-\xe4,2\n"), "l.csv")
	if err != nil {
		t.Fatal(err)
	}
	if f, ok := ss.lookup(&spectrum.Spectrum{Name: "Probe-ä"}); !ok || f.Dilution != 2 {
		t.Errorf("Latin-1 name: %+v %v", f, ok)
	}
	if w := ss.Warnings(); len(w) != 1 || !strings.HasPrefix(w[0], "l.csv:2: the sample sheet is not UTF-8") {
		t.Errorf("warnings %q", w)
	}
}
