package reference

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

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
	if !errors.Is(err, ErrSheetHeader) || !strings.Contains(err.Error(), "folder") {
		t.Errorf("folder as sheet: %v", err)
	}
	p := writeSheet(t, dir, "self.csv", "scan,dye\nlink.csv,1\ns1.csv,2\n")
	if err := os.Symlink(p, filepath.Join(dir, "link.csv")); err != nil {
		t.Skipf("no symbolic links here: %v", err)
	}
	_, err = ReadSheet(p, SheetOptions{})
	if !errors.Is(err, ErrScanFile) || !strings.Contains(err.Error(), "self.csv:2:1") || !strings.Contains(err.Error(), "names itself") {
		t.Errorf("sheet through a link: %v", err)
	}
	big := writeSheet(t, dir, "big.csv", "scan,dye\ns1.csv,1\ns2.csv,2\n")
	if err := os.Truncate(big, 3<<30); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	_, err = ReadSheet(big, SheetOptions{})
	if !errors.Is(err, ErrSheetHeader) || !strings.Contains(err.Error(), "3 GiB, more than the 64 MiB") {
		t.Errorf("3 GiB sheet: %v", err)
	}
}

// TestLoadLayout: a set re-saved by an editor (byte order mark, CRLF)
// still loads, since the checksum covers content, not layout; a folder
// and a file too large to be a set are refused before reading.
func TestLoadLayout(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.json")
	if err := memSet().Save(good); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	win := filepath.Join(dir, "win.json")
	if err := os.WriteFile(win, append([]byte("\ufeff"), bytes.ReplaceAll(raw, []byte("\n"), []byte("\r\n"))...), 0o644); err != nil {
		t.Fatal(err)
	}
	if s, err := Load(win); err != nil || s.Compounds[0].Name != "dye A" {
		t.Errorf("BOM and CRLF: %v", err)
	}
	if _, err := Load(dir); !errors.Is(err, ErrNotSet) || !strings.Contains(err.Error(), "folder") {
		t.Errorf("folder: %v", err)
	}
	big := filepath.Join(dir, "big.json")
	if err := os.WriteFile(big, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(big, 4<<30); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	if _, err := Load(big); !errors.Is(err, ErrNotSet) || !strings.Contains(err.Error(), "4 GiB, more than the 256 MiB") {
		t.Errorf("4 GiB set: %v", err)
	}
}

// TestReadUpTo: the size limit holds while reading, not only by the size
// a file reports.
func TestReadUpTo(t *testing.T) {
	p := filepath.Join(t.TempDir(), "ten")
	if err := os.WriteFile(p, []byte("0123456789"), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := readUpTo(p, 10); err != nil || string(b) != "0123456789" {
		t.Errorf("limit 10: %q, %v", b, err)
	}
	if _, err := readUpTo(p, 9); !errors.Is(err, errTooLarge) {
		t.Errorf("limit 9: %v, want errTooLarge", err)
	}
}
