package reference

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"testing"
)

// TestFileSHA256: the hash of "abc" is the one of the SHA-256 standard's
// first example (FIPS 180-2, appendix B.1); a missing file is an error.
func TestFileSHA256(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "abc.txt")
	if err := os.WriteFile(p, []byte("abc"), 0o644); err != nil {
		t.Fatal(err)
	}
	// FIPS 180-2, appendix B.1: SHA-256("abc").
	const want = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
	if got, err := FileSHA256(p); err != nil || got != want {
		t.Errorf("SHA-256 of abc: %s, %v; want %s", got, err, want)
	}
	if _, err := FileSHA256(filepath.Join(dir, "missing")); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
}
