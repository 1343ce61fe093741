package calibration

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/spectrum"
)

// writeScan writes a two-column absorbance scan with the spectrum writer.
func writeScan(t testing.TB, path string, wl, v []float64) {
	t.Helper()
	writeTable(t, path, wl, map[string][]float64{"": v})
}

// writeTable writes one or more scans (a wide table when several).
func writeTable(t testing.TB, path string, wl []float64, cols map[string][]float64) {
	t.Helper()
	var ss []*spectrum.Spectrum
	for _, name := range sortedKeys(cols) {
		ss = append(ss, &spectrum.Spectrum{Name: name, Wavelengths: wl, Values: cols[name], Quantity: spectrum.Absorbance})
	}
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if err := spectrum.WriteDelimited(f, ss, spectrum.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
}

func sortedKeys(m map[string][]float64) []string {
	var k []string
	for s := range m {
		k = append(k, s)
	}
	for i := range k {
		for j := i + 1; j < len(k); j++ {
			if k[j] < k[i] {
				k[i], k[j] = k[j], k[i]
			}
		}
	}
	return k
}

// sheetDir writes invented scans (a band at 500 nm, absorbance 0.1 per
// unit) for the tests of ReadSheet and returns the folder.
func sheetDir(t testing.TB) string {
	t.Helper()
	dir := t.TempDir()
	wl := linGrid(450, 5, 21)
	shape := band(wl, 500, 20, 0.1)
	writeScan(t, filepath.Join(dir, "blank.csv"), wl, make([]float64, len(wl)))
	for _, c := range []float64{1, 2, 3, 4} {
		writeScan(t, filepath.Join(dir, fmt.Sprintf("s%g.csv", c)), wl, scale(append([]float64(nil), shape...), c))
	}
	writeTable(t, filepath.Join(dir, "wide.csv"), wl, map[string][]float64{
		"mix-a": scale(append([]float64(nil), shape...), 5),
		"mix-b": scale(append([]float64(nil), shape...), 6),
	})
	if err := os.Mkdir(filepath.Join(dir, "folder"), 0o755); err != nil {
		t.Fatal(err)
	}
	return dir
}

func writeSheet(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestReadSheet(t *testing.T) {
	dir := sheetDir(t)
	for _, c := range []struct {
		name, text string
	}{
		{"comma", "# invented standards\nscan,column,dye (mg/L),note\nblank.csv,,0,solvent only\n\ns1.csv,,1,\ns2.csv,,2,\nwide.csv,mix-b,6,\nwide.csv,1,5,first scan\n"},
		{"semicolon decimal comma", "scan;column;dye (mg/L)\nblank.csv;;0\ns1.csv;;1,0\ns2.csv;;2\nwide.csv;mix-b;6\nwide.csv;1;5,0\n"},
		{"tab quoted", "scan\tcolumn\tdye (mg/L)\n\"blank.csv\"\t\t0\ns1.csv\t\t1\ns2.csv\t\t2\nwide.csv\tMIX-B\t6\nwide.csv\tmix-a\t5\n"},
	} {
		t.Run(c.name, func(t *testing.T) {
			var warned []string
			sh, err := ReadSheet(writeSheet(t, dir, "sheet.txt", c.text), SheetOptions{Warn: func(m string) { warned = append(warned, m) }})
			if err != nil {
				t.Fatal(err)
			}
			if len(sh.Compounds) != 1 || sh.Compounds[0] != "dye" || sh.Units[0] != "mg/L" {
				t.Fatalf("compounds %q units %q", sh.Compounds, sh.Units)
			}
			if len(sh.Blanks) != 1 || len(sh.Standards) != 4 {
				t.Fatalf("%d blanks, %d standards; want 1, 4", len(sh.Blanks), len(sh.Standards))
			}
			wantConc := []float64{1, 2, 6, 5}
			for i, r := range sh.Standards {
				if r.Conc[0] != wantConc[i] {
					t.Errorf("standard %d: conc %g, want %g", i, r.Conc[0], wantConc[i])
				}
				// The scan's peak is 0.1 per unit at 500 nm.
				if got := r.Scan.Values[10]; relErr(got, 0.1*wantConc[i]) > 1e-12 {
					t.Errorf("standard %d (%s %s): peak %g, want %g", i, r.File, r.Column, got, 0.1*wantConc[i])
				}
				raw, _ := os.ReadFile(r.Path)
				sum := sha256.Sum256(raw)
				if r.scanSHA256 != hex.EncodeToString(sum[:]) {
					t.Errorf("standard %d: sha256 %s", i, r.scanSHA256)
				}
			}
			if sh.Standards[0].Line != map[string]int{"comma": 5, "semicolon decimal comma": 3, "tab quoted": 3}[c.name] {
				t.Errorf("first standard on line %d", sh.Standards[0].Line)
			}
		})
	}
}

func TestReadSheetUnits(t *testing.T) {
	dir := sheetDir(t)
	text := "scan,dye,other (µmol/L)\nblank.csv,0,0\ns1.csv,1,0\ns2.csv,0,2\ns3.csv,3,0\n"
	var warned []string
	sh, err := ReadSheet(writeSheet(t, dir, "u.csv", text), SheetOptions{Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if sh.Units[0] != "" || sh.Units[1] != "µmol/L" {
		t.Errorf("units %q", sh.Units)
	}
	if len(warned) != 1 || !strings.Contains(warned[0], "no concentration unit stated for dye") || !strings.Contains(warned[0], "u.csv:1") {
		t.Errorf("warnings %q", warned)
	}
	sh, err = ReadSheet(filepath.Join(dir, "u.csv"), SheetOptions{Unit: "mg/L"})
	if err != nil {
		t.Fatal(err)
	}
	if sh.Units[0] != "mg/L" || sh.Units[1] != "µmol/L" {
		t.Errorf("with Unit option: units %q", sh.Units)
	}
}

// TestReadSheetUnitForms: a unit in round or square brackets, with the
// molar mass after a semicolon or in the molar-mass row (which is not a
// standard). Before square brackets were read, "dye [mg/L]" was refused.
func TestReadSheetUnitForms(t *testing.T) {
	dir := sheetDir(t)
	text := "scan,dye [mg/L],other (µmol/L; M=534.4 g/mol),third [µM]\n" +
		"Molar Mass (g/mol),,534.4,120,\n" +
		"blank.csv,0,0,0\ns1.csv,1,0,1\ns2.csv,0,2,2\ns3.csv,3,0,0\n"
	text = strings.Replace(text, "120,\n", "120\n", 1)
	sh, err := ReadSheet(writeSheet(t, dir, "u.csv", text), SheetOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(sh.Compounds, "|") + " " + strings.Join(sh.Units, "|"); got != "dye|other|third mg/L|µmol/L|µM" {
		t.Errorf("compounds and units %q", got)
	}
	if sh.MolarMass[0] != 0 || sh.MolarMass[1] != 534.4 || sh.MolarMass[2] != 120 {
		t.Errorf("molar masses %v", sh.MolarMass)
	}
	if len(sh.Standards)+len(sh.Blanks) != 4 || sh.Blanks[0].Line != 3 {
		t.Errorf("the molar-mass row was taken as a standard: %d rows, blank on line %d", len(sh.Standards)+len(sh.Blanks), sh.Blanks[0].Line)
	}
	if fmt.Sprint(sh.Columns) != "[2 3 4]" {
		t.Errorf("columns %v", sh.Columns)
	}
}

func TestReadSheetErrors(t *testing.T) {
	dir := sheetDir(t)
	cases := []struct {
		name, text string
		want       error
		where      string // "sheet:line[:column]" the message must hold
		says       string
	}{
		{"missing file", "scan,dye\nblank.csv,0\nnone.csv,1\n", errScanFile, "bad.csv:3:1", "none.csv does not exist"},
		{"folder", "scan,dye\nfolder,1\ns1.csv,2\n", errScanFile, "bad.csv:2:1", "is a folder"},
		{"sheet itself", "scan,dye\nbad.csv,1\ns1.csv,2\n", errScanFile, "bad.csv:2:1", "names itself"},
		{"negative", "scan,dye\ns1.csv,1\ns2.csv,-2\n", errConcentration, "bad.csv:3:2", "negative"},
		{"text", "scan,dye\ns1.csv,1\ns2.csv,two\n", errConcentration, "bad.csv:3:2", "not a number"},
		{"nan", "scan,dye\ns1.csv,NaN\ns2.csv,2\n", errConcentration, "bad.csv:2:2", "not a number"},
		{"empty cell", "scan,dye\ns1.csv,\ns2.csv,2\n", errConcentration, "bad.csv:2:2", "write 0"},
		{"unknown column", "scan,column,dye\ns1.csv,,1\nwide.csv,mix-z,5\n", errScanFile, "bad.csv:3:2", `no scan named "mix-z"`},
		{"column number", "scan,column,dye\ns1.csv,,1\nwide.csv,3,5\n", errScanFile, "bad.csv:3:2", "holds 2 scans"},
		{"wide without column", "scan,dye\ns1.csv,1\nwide.csv,5\n", errScanFile, "bad.csv:3:1", "holds 2 scans"},
		{"duplicate compound", "scan,Dye (mg/L),dye\ns1.csv,1,1\ns2.csv,2,2\n", errSheetHeader, "bad.csv:1:3", "named twice"},
		{"no scan column", "file,dye\ns1.csv,1\n", errSheetHeader, "bad.csv:1", "named scan"},
		{"no compounds", "scan,column\ns1.csv,\n", errSheetHeader, "bad.csv:1", "no compound columns"},
		{"empty brackets", "scan,dye ()\ns1.csv,1\n", errSheetHeader, "bad.csv:1:2", "empty brackets"},
		{"empty square brackets", "scan,dye [ ]\ns1.csv,1\n", errSheetHeader, "bad.csv:1:2", "empty brackets"},
		{"two units", "scan,dye (mg/L) [µM]\ns1.csv,1\n", errSheetHeader, "bad.csv:1:2", `"name [unit]"`},
		{"molar mass without unit", "scan,dye (µM; M=534.4)\ns1.csv,1\n", errSheetHeader, "bad.csv:1:2", "give it in g/mol"},
		{"molar mass misnamed", "scan,dye (µM; MW=534.4 g/mol)\ns1.csv,1\n", errSheetHeader, "bad.csv:1:2", "M=534.4 g/mol"},
		{"molar-mass row without unit", "scan,dye (µM)\nmolar mass,534.4\ns1.csv,1\ns2.csv,2\n", errScanFile, "bad.csv:2:1", `label the molar-mass row "molar mass (g/mol)"`},
		{"molar-mass row negative", "scan,dye (µM)\nmolar mass (g/mol),-5\ns1.csv,1\ns2.csv,2\n", errConcentration, "bad.csv:2:2", "want a number of g/mol above 0"},
		{"molar-mass row twice", "scan,dye (µM)\nmolar mass (g/mol),5\nmolar mass [g/mol],5\ns1.csv,1\ns2.csv,2\n", errConcentration, "bad.csv:3:1", "second molar-mass row (the first is on line 2)"},
		{"molar masses disagree", "scan,dye (µM; M=5 g/mol)\nmolar mass (g/mol),6\ns1.csv,1\ns2.csv,2\n", errConcentration, "bad.csv:2:2", "6 g/mol here but 5 g/mol in the header"},
		{"never varies", "scan,dye,other\nblank.csv,0,0\ns1.csv,1,0\ns2.csv,2,0\n", errNoVariation, "bad.csv", "other is 0 in every row"},
		{"blanks only", "scan,dye\nblank.csv,0\n", errConcentration, "bad.csv", "no standards: every row has all concentrations zero (blanks only)"},
		{"no rows", "scan,dye\n", errConcentration, "bad.csv", "no standards: the sheet has a header but no rows"},
		{"no rows but comments", "# made 2 May\nscan,dye\n\n", errConcentration, "bad.csv", "but no rows"},
		{"extra field", "scan,dye\ns1.csv,1,9\ns2.csv,2\n", nil, "bad.csv:2:3", "header names 2 columns"},
		{"missing field", "scan,dye,other\ns1.csv,1,0\ns2.csv,2\n", nil, "bad.csv:3:3", "row has 2 fields but the header names 3 columns"},
		{"hex", "scan,dye\ns1.csv,0x1p3\ns2.csv,2\n", errConcentration, "bad.csv:2:2", `"0x1p3" is not a number`},
		{"underscore", "scan,dye\ns1.csv,1_0\ns2.csv,2\n", errConcentration, "bad.csv:2:2", `"1_0" is not a number`},
		{"mixed decimal marks", "scan;dye\ns1.csv;1,5\ns2.csv;2.5\n", errConcentration, "bad.csv:3:2", "mixed decimal conventions"},
		{"bare quote", "scan,dye\ns1\"x.csv,1\n", nil, "bad.csv:2:1", "not quoted"},
		{"scan twice", "scan,Scan,dye\ns1.csv,s1.csv,1\n", errSheetHeader, "bad.csv:1:2", `column "scan" given twice`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := writeSheet(t, dir, "bad.csv", c.text)
			_, err := ReadSheet(p, SheetOptions{})
			if err == nil {
				t.Fatal("no error")
			}
			if c.want != nil && !errors.Is(err, c.want) {
				t.Errorf("error %v, want %v", err, c.want)
			}
			var pe *spectrum.ParseError
			if !errors.As(err, &pe) {
				t.Errorf("error %T is not a *spectrum.ParseError", err)
			}
			msg := err.Error()
			if !strings.Contains(msg, c.where) || !strings.Contains(msg, c.says) {
				t.Errorf("error %q, want it to name %q and say %q", msg, c.where, c.says)
			}
		})
	}
}

// TestReadSheetChecksAllowConstant: a check-standard sheet may hold
// replicates of one mixture, which a calibration sheet may not.
func TestReadSheetChecksAllowConstant(t *testing.T) {
	dir := sheetDir(t)
	p := writeSheet(t, dir, "checks.csv", "scan,dye\ns1.csv,1\ns2.csv,1\n")
	if _, err := ReadSheet(p, SheetOptions{}); !errors.Is(err, errNoVariation) {
		t.Fatalf("calibration sheet: err = %v, want errNoVariation", err)
	}
	sh, err := ReadSheet(p, SheetOptions{Checks: true})
	if err != nil {
		t.Fatalf("check sheet: %v", err)
	}
	if len(sh.Standards) != 2 {
		t.Fatalf("check sheet has %d standards, want 2", len(sh.Standards))
	}
}

// FuzzReadSheet feeds arbitrary sheets (naming the scans of sheetDir) to
// ReadSheet: it must never panic, and a sheet it accepts must have a
// finite, non-negative concentration for every compound of every row.
func FuzzReadSheet(f *testing.F) {
	for _, s := range []string{
		"scan,dye (mg/L)\nblank.csv,0\ns1.csv,1\ns2.csv,2\n",
		"scan;column;dye\ns1.csv;;1,5\nwide.csv;mix-a;2\n",
		"# c\nscan\tdye\tnote\ns1.csv\t1\tx\ns2.csv\t3\t\n",
		"scan,dye,dye\n",
		"\"scan\",\"a (\"\"u\"\")\"\ns1.csv,1e400\n",
	} {
		f.Add(s)
	}
	dir := sheetDir(f)
	f.Fuzz(func(t *testing.T, text string) {
		p := filepath.Join(dir, "fuzz.csv")
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		sh, err := ReadSheet(p, SheetOptions{})
		if err != nil {
			return
		}
		for _, r := range append(sh.Standards, sh.Blanks...) {
			if len(r.Conc) != len(sh.Compounds) || r.Scan == nil {
				t.Fatalf("row %d: %d concentrations for %d compounds", r.Line, len(r.Conc), len(sh.Compounds))
			}
			for _, v := range r.Conc {
				if !finite(v) || v < 0 {
					t.Fatalf("row %d: concentration %v accepted", r.Line, v)
				}
			}
		}
	})
}

// TestReadSheetWindowsAndLatin1: a sheet saved on Windows (byte order
// mark, CRLF line ends) reads like the plain one; a Latin-1 sheet is read
// as Latin-1 with a warning naming the line.
func TestReadSheetWindowsAndLatin1(t *testing.T) {
	dir := sheetDir(t)
	plain := "scan,dye (mg/L)\nblank.csv,0\ns1.csv,1\ns2.csv,2\ns3.csv,3\n"
	want, err := ReadSheet(writeSheet(t, dir, "plain.csv", plain), SheetOptions{})
	if err != nil {
		t.Fatal(err)
	}
	win := "\ufeff" + strings.ReplaceAll(plain, "\n", "\r\n")
	got, err := ReadSheet(writeSheet(t, dir, "win.csv", win), SheetOptions{})
	if err != nil {
		t.Fatalf("BOM and CRLF: %v", err)
	}
	if got.Compounds[0] != "dye" || got.Units[0] != "mg/L" || len(got.Standards) != len(want.Standards) || got.Standards[2].Conc[0] != 3 {
		t.Errorf("BOM and CRLF: %q %q, %d standards", got.Compounds, got.Units, len(got.Standards))
	}
	var warns []string
	latin := "scan,dye (\xb5g/L)\nblank.csv,0\ns1.csv,1\ns2.csv,2\n"
	got, err = ReadSheet(writeSheet(t, dir, "latin.csv", latin), SheetOptions{Warn: func(m string) { warns = append(warns, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if got.Units[0] != "µg/L" || len(warns) != 1 || !strings.Contains(warns[0], "latin.csv:1:") || !strings.Contains(warns[0], "Latin-1") {
		t.Errorf("Latin-1 sheet: unit %q, warnings %q", got.Units[0], warns)
	}
}

// TestReadSheetRefuses: a folder given as the sheet, a sheet reached
// again through a link, and a sheet too large to be one.
func TestReadSheetRefuses(t *testing.T) {
	dir := sheetDir(t)
	_, err := ReadSheet(filepath.Join(dir, "folder"), SheetOptions{})
	if !errors.Is(err, errSheetHeader) || !strings.Contains(err.Error(), "folder") {
		t.Errorf("folder as sheet: %v", err)
	}
	p := writeSheet(t, dir, "self.csv", "scan,dye\nlink.csv,1\ns1.csv,2\n")
	if err := os.Symlink(p, filepath.Join(dir, "link.csv")); err != nil {
		t.Skipf("no symbolic links here: %v", err)
	}
	_, err = ReadSheet(p, SheetOptions{})
	if !errors.Is(err, errScanFile) || !strings.Contains(err.Error(), "self.csv:2:1") || !strings.Contains(err.Error(), "names itself") {
		t.Errorf("sheet through a link: %v", err)
	}
	big := writeSheet(t, dir, "big.csv", "scan,dye\ns1.csv,1\ns2.csv,2\n")
	if err := os.Truncate(big, 3<<30); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	_, err = ReadSheet(big, SheetOptions{})
	if !errors.Is(err, errSheetHeader) || !strings.Contains(err.Error(), "3 GiB, more than the 64 MiB") {
		t.Errorf("3 GiB sheet: %v", err)
	}
}
