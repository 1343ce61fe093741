package spectrum

import (
	"bytes"
	"crypto/sha256"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
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

// TestLinesInMemory: the lines of data held in memory (one search for a
// CR for many lines) are those the scanner yields from a reader, for
// every mix of LF, CR and CRLF line ends.
func TestLinesInMemory(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	alphabet := []byte("ab\r\n")
	for range 5000 {
		data := make([]byte, rng.IntN(12))
		for i := range data {
			data[i] = alphabet[rng.IntN(len(alphabet))]
		}
		var want, got []string
		lr := newLineReader(bytes.NewReader(data), "x", 100, int64(len(data)))
		for {
			l, ok, err := lr.next()
			if err != nil || !ok {
				break
			}
			want = append(want, string(l))
		}
		lr = newBytesLineReader(data, "x", 100)
		for {
			l, ok, err := lr.next()
			if err != nil || !ok {
				break
			}
			got = append(got, string(l))
		}
		if !slices.Equal(got, want) {
			t.Fatalf("%q: lines %q, the scanner's %q", data, got, want)
		}
	}
}

// TestReadFileSharesGrid: scans read whole one after another on the same
// grid share one wavelength slice, a scan on another grid (or the same
// numbers written -0 for 0) gets its own, and the values are exactly as
// long as the scan (no part of a reused buffer).
func TestReadFileSharesGrid(t *testing.T) {
	dir := t.TempDir()
	files := map[string]string{
		"a.csv": "nm,abs\n400,0.1\n401,0.2\n402,0.3\n",
		"b.csv": "# b\nnm,abs\n402,0.6\n401,0.5\n400,0.4\n",
		"c.csv": "nm,abs\n400,0.1\n401,0.2\n403,0.3\n",
		"z.csv": "nm,abs\n0,0.1\n1,0.2\n2,0.3\n",
		"m.csv": "nm,abs\n-0,0.1\n1,0.2\n2,0.3\n",
	}
	read := func(name string) *Spectrum {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(files[name]), 0o644); err != nil {
			t.Fatal(err)
		}
		ss, err := ReadFile(p, ReadOptions{Quantity: Absorbance})
		if err != nil || len(ss) != 1 {
			t.Fatalf("%s: %d spectra, %v", name, len(ss), err)
		}
		if s := ss[0]; len(s.Values) != 3 || cap(s.Values) != 3 || cap(s.Wavelengths) != 3 {
			t.Fatalf("%s: values %v (cap %d), wavelengths cap %d", name, s.Values, cap(s.Values), cap(s.Wavelengths))
		}
		return ss[0]
	}
	a, b, c := read("a.csv"), read("b.csv"), read("c.csv")
	if &a.Wavelengths[0] != &b.Wavelengths[0] {
		t.Error("a and b, on one grid, do not share it")
	}
	if !slices.Equal(b.Values, []float64{0.4, 0.5, 0.6}) || !slices.Equal(a.Values, []float64{0.1, 0.2, 0.3}) {
		t.Errorf("values a %v, b %v", a.Values, b.Values)
	}
	if &c.Wavelengths[0] == &a.Wavelengths[0] || c.Wavelengths[2] != 403 || a.Wavelengths[2] != 402 {
		t.Errorf("c's grid %v shared with a's %v", c.Wavelengths, a.Wavelengths)
	}
	z, m := read("z.csv"), read("m.csv")
	if &z.Wavelengths[0] == &m.Wavelengths[0] || !math.Signbit(m.Wavelengths[0]) {
		t.Errorf("-0 nm read as the 0 nm before it: %v", m.Wavelengths)
	}
}
