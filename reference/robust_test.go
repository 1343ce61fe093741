package reference

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

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
	if _, err := Load(dir); !errors.Is(err, errNotSet) || !strings.Contains(err.Error(), "folder") {
		t.Errorf("folder: %v", err)
	}
	big := filepath.Join(dir, "big.json")
	if err := os.WriteFile(big, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(big, 4<<30); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	if _, err := Load(big); !errors.Is(err, errNotSet) || !strings.Contains(err.Error(), "4 GiB, more than the 256 MiB") {
		t.Errorf("4 GiB set: %v", err)
	}
}

// TestReadUpTo: the size limit holds while reading, not only by the size
// a file reports.
func TestReadUpTo(t *testing.T) {
	const p = "0123456789"
	if b, err := readUpTo(strings.NewReader(p), 10); err != nil || string(b) != "0123456789" {
		t.Errorf("limit 10: %q, %v", b, err)
	}
	if _, err := readUpTo(strings.NewReader(p), 9); !errors.Is(err, errTooLarge) {
		t.Errorf("limit 9: %v, want errTooLarge", err)
	}
}
