package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"huesolve/reference"
)

// sparse writes head into path and extends the file to size bytes with a
// hole (zero bytes that take no disk), or skips the test where the file
// system cannot.
func sparse(t *testing.T, path string, head []byte, size int64) string {
	t.Helper()
	if err := os.WriteFile(path, head, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(path, size); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	return path
}

// TestHostileScanFiles runs files no spectrum reader should choke on
// through look and solve: each ends in a clear message naming the file
// (and line or size), the good files next to them are solved, and
// nothing panics or hangs.
func TestHostileScanFiles(t *testing.T) {
	longEndToEnd(t)
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	good := writeScans(t, filepath.Join(dir, "good.csv"), solveScan("G1", []float64{5, 3, 2, 8}, 0, 1))

	// 100 MB of zero bytes after a header: one line far beyond the
	// 64 MiB a line may have.
	longLine := sparse(t, filepath.Join(dir, "long-line.csv"), []byte("nm,A\n400,0.1\n"), 100<<20)
	// 5 GiB: refused by its size before reading.
	huge := sparse(t, filepath.Join(dir, "huge.csv"), []byte("nm,A\n400,0.1\n401,0.2\n"), 5<<30)
	// A JCAMP-DX file declaring four million points and holding three,
	// and one declaring a trillion.
	jdx := func(n string) []byte {
		return []byte("##TITLE=liar\n##JCAMP-DX=4.24\n##DATA TYPE=UV/VIS SPECTRUM\n##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n" +
			"##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=400\n##LASTX=402\n##NPOINTS=" + n + "\n##XYDATA=(X++(Y..Y))\n400 1 2 3\n##END=\n")
	}
	liar := filepath.Join(dir, "liar.jdx")
	if err := os.WriteFile(liar, jdx("4000000"), 0o644); err != nil {
		t.Fatal(err)
	}
	bigLiar := filepath.Join(dir, "big-liar.jdx")
	if err := os.WriteFile(bigLiar, jdx("1000000000000"), 0o644); err != nil {
		t.Fatal(err)
	}
	// More columns than a table may have (2^20 + 1).
	var wide bytes.Buffer
	for range 1 << 20 {
		wide.WriteString("1,")
	}
	wide.WriteString("1\n")
	tooWide := filepath.Join(dir, "too-wide.csv")
	if err := os.WriteFile(tooWide, append(wide.Bytes(), wide.Bytes()...), 0o644); err != nil {
		t.Fatal(err)
	}

	cases := []struct{ file, says string }{
		{longLine, "long-line.csv:3: line longer than 67108864 bytes"},
		{huge, "huge.csv: the file is 5 GiB, more than the 1 GiB a spectrum file may hold"},
		{liar, "liar.jdx:10: ##NPOINTS=4000000 disagrees with the data: the table (lines 12-12) holds 3 decoded points"},
		{bigLiar, "big-liar.jdx:10: ##NPOINTS=1000000000000 exceeds the 4194304 points"},
		{tooWide, "too-wide.csv:1:1048577: table has 1048577 columns, more than the 1048576"},
		{filepath.Join(dir, "missing.csv"), "missing.csv: no such file"},
	}
	if _, err := os.Stat("/proc/self/mem"); err == nil {
		// Opens, but reading at offset 0 fails (Linux): an unreadable
		// file that even the superuser cannot read.
		cases = append(cases, struct{ file, says string }{"/proc/self/mem", "cannot read /proc/self/mem"})
	}
	if os.Geteuid() != 0 {
		locked := writeScans(t, filepath.Join(dir, "locked.csv"), solveScan("L", []float64{1, 1, 1, 1}, 0, 2))
		if err := os.Chmod(locked, 0); err != nil {
			t.Fatal(err)
		}
		cases = append(cases, struct{ file, says string }{locked, "locked.csv: permission denied"})
	}
	// look on the folder reads its files one by one: each hostile one is
	// refused with its reason, the rest are listed (exit 3).
	if _, errOut, code := run(t, "look", dir); code != exitSkipped || !strings.Contains(errOut, "huge.csv: the file is 5 GiB") {
		t.Errorf("look on a folder: exit %d, stderr %q", code, errOut)
	}
	for _, c := range cases {
		t.Run(filepath.Base(c.file), func(t *testing.T) {
			out, errOut, code := run(t, "look", c.file)
			if code != exitFailure || out != "" || !strings.Contains(errOut, c.says) {
				t.Errorf("look: exit %d, stdout %q, stderr:\n%s\nwant exit 1 and %q", code, out, errOut, c.says)
			}
			out, errOut, code = run(t, "solve", ref, good, c.file, good, "--format", "csv")
			if code != exitSkipped || !strings.Contains(errOut, c.says) || !strings.Contains(errOut, "2 sample(s) solved from 3 input(s)") {
				t.Errorf("solve: exit %d, stderr:\n%s\nwant exit 3 and %q", code, errOut, c.says)
			}
			// The second copy is renamed "G1 (good)" (a name taken).
			if n := strings.Count(out, "\nG1"); n != 2 {
				t.Errorf("solve: the good file solved %d times, want 2:\n%s", n, out)
			}
		})
	}
}

// TestHostileOtherInputs: a reference set, sample sheet or standards
// sheet that is a folder, too large, or unreadable is refused with a
// message naming it.
func TestHostileOtherInputs(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	good := writeScans(t, filepath.Join(dir, "good.csv"), solveScan("G1", []float64{5, 3, 2, 8}, 0, 1))
	hugeSet := sparse(t, filepath.Join(dir, "huge.json"), []byte("{"), 3<<30)
	hugeSheet := sparse(t, filepath.Join(dir, "huge-sheet.csv"), []byte("sample,dilution\n"), 3<<30)
	for _, c := range []struct {
		name string
		args []string
		says string
	}{
		{"set is a folder", []string{"solve", dir, good}, "it is a folder"},
		{"set too large", []string{"solve", hugeSet, good}, "huge.json: not a huesolve reference set: the file is 3 GiB, more than the 256 MiB"},
		{"set is a scan", []string{"solve", good, good}, "good.csv: not a huesolve reference set"},
		{"sample sheet folder", []string{"solve", ref, good, "--samples", dir}, dir + ": the sample sheet is a folder; give the sheet file"},
		{"sample sheet too large", []string{"solve", ref, good, "--samples", hugeSheet}, "huge-sheet.csv: the file is 3 GiB, more than the 64 MiB a sample sheet may take"},
		{"standards sheet folder", []string{"calibrate", dir, "-o", filepath.Join(dir, "r.json")}, "the standards sheet is a folder"},
		{"standards sheet too large", []string{"calibrate", hugeSheet, "-o", filepath.Join(dir, "r.json")}, "3 GiB, more than the 64 MiB a standards sheet may take"},
		{"blank too large", []string{"solve", ref, good, "--blank", sparse(t, filepath.Join(dir, "huge-blank.csv"), []byte("nm,A\n"), 2<<30)}, "huge-blank.csv: the file is 2 GiB"},
	} {
		t.Run(c.name, func(t *testing.T) {
			out, errOut, code := run(t, c.args...)
			if code != exitFailure || out != "" || !strings.Contains(errOut, c.says) {
				t.Errorf("exit %d, stdout %q, stderr:\n%s\nwant exit 1 and %q", code, out, errOut, c.says)
			}
		})
	}
	if _, err := os.Stat(filepath.Join(dir, "r.json")); !os.IsNotExist(err) {
		t.Error("a refused calibration wrote a reference set")
	}
}

// TestHostileReferenceSets: solve refuses a reference set that was cut
// short, edited by hand or written by a newer huesolve, and takes one an
// editor re-saved with a byte order mark and CRLF line ends.
func TestHostileReferenceSets(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 1, 8}, 0, 1))
	raw, err := os.ReadFile(ref)
	if err != nil {
		t.Fatal(err)
	}
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	want, _, code := run(t, "solve", ref, scan, "--format", "csv")
	if code != exitOK {
		t.Fatalf("good set: exit %d", code)
	}
	for _, c := range []struct {
		name string
		data []byte
		says string
	}{
		{"truncated", raw[:len(raw)*3/4], "ends early"},
		{"edited", bytes.Replace(raw, []byte(`"ceiling": 2`), []byte(`"ceiling": 2.5`), 1), "checksum does not match"},
		{"future", bytes.Replace(raw, []byte(`"schema": 1`), fmt.Appendf(nil, `"schema": %d`, reference.SchemaVersion+1), 1), "newer reference-set schema"},
		{"binary", []byte{0x1f, 0x8b, 0x08, 0x00, 0xff, 0xfe}, "not a huesolve reference set"},
	} {
		p := write(c.name+".json", c.data)
		out, errOut, code := run(t, "solve", p, scan)
		if code != exitFailure || out != "" || !strings.Contains(errOut, c.says) || !strings.Contains(errOut, p) {
			t.Errorf("%s: exit %d, stderr %q; want exit 1 naming %s and saying %q", c.name, code, errOut, p, c.says)
		}
	}
	win := write("win.json", append([]byte("\ufeff"), bytes.ReplaceAll(raw, []byte("\n"), []byte("\r\n"))...))
	got, errOut, code := run(t, "solve", win, scan, "--format", "csv")
	if code != exitOK || dataLines(got) != dataLines(want) {
		t.Errorf("set with BOM and CRLF: exit %d, %s\n%s\nwant\n%s", code, errOut, got, want)
	}
}

// TestScanTextVariants: a scan saved with a byte order mark and CRLF line
// ends, with CR-only line ends, or with a Latin-1 header gives the same
// results as the plain file.
func TestScanTextVariants(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	plain := writeScans(t, filepath.Join(dir, "plain.csv"), solveScan("S", []float64{5, 3, 1, 8}, 0.01, 1))
	raw, err := os.ReadFile(plain)
	if err != nil {
		t.Fatal(err)
	}
	want, _, code := run(t, "solve", ref, plain, "--format", "csv")
	if code != exitOK {
		t.Fatalf("plain: exit %d", code)
	}
	for _, c := range []struct {
		name string
		data []byte
		warn string
	}{
		{"bom-crlf", append([]byte("\ufeff"), bytes.ReplaceAll(raw, []byte("\n"), []byte("\r\n"))...), ""},
		{"cr", bytes.ReplaceAll(raw, []byte("\n"), []byte("\r")), ""},
		{"latin1", bytes.Replace(raw, []byte("S"), []byte("S \xb5"), 1), "not UTF-8; read it as Latin-1"},
	} {
		p := filepath.Join(dir, "plain-"+c.name+".csv")
		if err := os.WriteFile(p, c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		got, errOut, code := run(t, "solve", ref, p, "--format", "csv")
		if code != exitOK {
			t.Errorf("%s: exit %d\n%s", c.name, code, errOut)
			continue
		}
		// Only the sample name and file may differ.
		strip := func(s string) string {
			lines := strings.Split(s, "\n")
			_, rest, _ := strings.Cut(lines[1], ".csv,")
			return lines[0] + "\n" + rest
		}
		if strip(got) != strip(want) {
			t.Errorf("%s: results differ from the plain file:\n%s\nwant\n%s", c.name, got, want)
		}
		if c.warn != "" && !strings.Contains(errOut, c.warn) {
			t.Errorf("%s: no warning %q:\n%s", c.name, c.warn, errOut)
		}
	}
}

// TestLookWideTable: look reads a table of 100,000 scans and lists the
// first 40 of them.
func TestLookWideTable(t *testing.T) {
	const n = 100000
	var b bytes.Buffer
	b.WriteString("nm")
	for j := range n {
		b.WriteString(",S" + strconv.Itoa(j+1) + " [A]")
	}
	for _, w := range []string{"\n400", "\n401", "\n402"} {
		b.WriteString(w)
		for j := range n {
			b.WriteString("," + strconv.Itoa(j%3) + ".5")
		}
	}
	b.WriteByte('\n')
	p := filepath.Join(t.TempDir(), "wide.csv")
	if err := os.WriteFile(p, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errOut, code := run(t, "look", p, "--plain")
	if code != exitOK || errOut != "" {
		t.Fatalf("exit %d, stderr %q", code, errOut)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 40 || !strings.Contains(lines[39], "\tS40\t3\t400-402\t1\tabsorbance\t0.5\t0.5") {
		t.Errorf("%d lines, last %q", len(lines), lines[len(lines)-1])
	}
	out, _, code = run(t, "look", p)
	if code != exitOK || !strings.Contains(out, "100000 spectra") || !strings.Contains(out, "and 99960 more") {
		t.Errorf("table: exit %d\n%s", code, out)
	}
}
