package spectrum

import (
	"bytes"
	"crypto/sha256"
	"errors"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// TestReadFileDigest: ReadFile's digest is the SHA-256 of every byte of
// the file, for a scan read whole, a table read through the buffered
// path, and a file whose parsing stops at an error; a file refused for
// its size or not found has none.
func TestReadFileDigest(t *testing.T) {
	dir := t.TempDir()
	var big bytes.Buffer
	big.WriteString("nm,a,b\n")
	for i := 0; big.Len() <= wholeMaxBytes+100; i++ {
		big.WriteString(fmtG(float64(200+i)) + ",0.5,0.25\n")
	}
	files := map[string]string{
		"scan.csv": "nm,abs\n400,0.1\n401,0.2\n402,0.3\n",
		"bad.csv":  "nm,abs\n400,0.1\n401,x\n402,0.3\n# the rest is hashed too\n",
		"big.csv":  big.String(),
	}
	for name, text := range files {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(text), 0o600); err != nil {
			t.Fatal(err)
		}
		var d Digest
		_, err := ReadFile(path, ReadOptions{Quantity: Absorbance, Digest: &d})
		if (err != nil) != (name == "bad.csv") {
			t.Fatalf("%s: error %v", name, err)
		}
		if !d.Read || d.TooLarge || d.SHA256 != sha256.Sum256([]byte(text)) {
			t.Errorf("%s: digest %+v, want the SHA-256 of the file", name, d)
		}
	}
	d := Digest{Read: true}
	_, err := ReadFile(filepath.Join(dir, "scan.csv"), ReadOptions{MaxFileBytes: 10, Digest: &d})
	if !errors.Is(err, errTooLarge) || d.Read || !d.TooLarge {
		t.Errorf("over the size limit: %v, digest %+v", err, d)
	}
	d = Digest{Read: true}
	if _, err := ReadFile(filepath.Join(dir, "none.csv"), ReadOptions{Digest: &d}); err == nil || d.Read || d.TooLarge {
		t.Errorf("missing file: %v, digest %+v", err, d)
	}
}

// TestReadWholeFallback: a small scan is read in one piece (on Linux),
// and a file that the fast path leaves alone (a folder) keeps the
// general path's error.
func TestReadWholeFallback(t *testing.T) {
	dir := t.TempDir()
	_, err := ReadFile(dir, ReadOptions{})
	if err == nil || !strings.Contains(err.Error(), "is a directory, not a spectrum file") {
		t.Fatalf("folder: %v", err)
	}
	path := filepath.Join(dir, "s.csv")
	if err := os.WriteFile(path, []byte("nm,abs\n400,0.1\n401,0.2\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	bp := getWholeBuf()
	defer wholeBufs.Put(bp)
	n, ok, err := readSmallFile(path, wholeMaxBytes, bp)
	if err != nil || ok != (runtime.GOOS == "linux") {
		t.Fatalf("ok %v, error %v", ok, err)
	}
	if ok && string((*bp)[:n]) != "nm,abs\n400,0.1\n401,0.2\n" {
		t.Fatalf("read %q", (*bp)[:n])
	}
	if _, ok, _ := readSmallFile(path, 5, bp); ok {
		t.Fatal("a file over the limit was read whole")
	}
}
