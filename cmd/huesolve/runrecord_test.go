package main

import (
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
)

// commentedCSV reads a result CSV as its documentation tells readers to:
// lines starting with "#" (the run's record) are skipped.
func commentedCSV(r io.Reader) *csv.Reader {
	c := csv.NewReader(r)
	c.Comment = '#'
	return c
}

// dataLines is s without its "#" comment lines (the run's record).
func dataLines(s string) string {
	var b strings.Builder
	for _, l := range strings.SplitAfter(s, "\n") {
		if !strings.HasPrefix(l, "#") {
			b.WriteString(l)
		}
	}
	return b.String()
}

var (
	timeCSV     = regexp.MustCompile(`(?m)^# time: .*$`)
	timeJSON    = regexp.MustCompile(`"time": "[^"]*"`)
	commandCSV  = regexp.MustCompile(`(?m)^# command: .*$`)
	commandJSON = regexp.MustCompile(`"command": \[[^\]]*\]`)
)

// maskTime replaces the run's time in a CSV or JSON result file (the one
// field that differs between two runs of the same command) by TIME.
func maskTime(s string) string {
	s = timeCSV.ReplaceAllString(s, "# time: TIME")
	return timeJSON.ReplaceAllString(s, `"time": "TIME"`)
}

// maskCommand replaces the run's command line by COMMAND, for tests that
// compare runs of different command lines.
func maskCommand(s string) string {
	s = commandCSV.ReplaceAllString(s, "# command: COMMAND")
	return commandJSON.ReplaceAllString(s, `"command": "COMMAND"`)
}

// runTwice runs args twice, with SOURCE_DATE_EPOCH a minute apart, and
// returns the two -o files (out, in the current folder).
func runTwice(t *testing.T, out string, args ...string) [2]string {
	t.Helper()
	var got [2]string
	for i, epoch := range []string{"1700000000", "1700000060"} {
		t.Setenv("SOURCE_DATE_EPOCH", epoch)
		if _, errOut, code := run(t, append(args, "-o", out)...); code != exitOK && code != exitFlagged {
			t.Fatalf("%v: exit %d\n%s", args, code, errOut)
		}
		b, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		got[i] = string(b)
	}
	return got
}

// TestRunsDifferOnlyInTime: two runs of the same command on the same
// files write result files that differ in the time of the run only (the
// record is host-independent: no folder the user did not type), for
// solve, verify and window, CSV and JSON.
func TestRunsDifferOnlyInTime(t *testing.T) {
	dir := t.TempDir()
	solveInputs(t, dir)
	vdir, _, _ := valCase(t, 1)
	for _, c := range []struct {
		dir  string
		args []string
	}{
		{dir, []string{"solve", "refs.json", "s1.csv", "wide.csv", "--samples", "sheet.csv"}},
		{vdir, []string{"verify", "refs.json", "checks.csv", "--blank", "blank1.csv", "--crossval", "standards.csv"}},
		{vdir, []string{"window", "refs.json", "--step", "50", "--min-width", "100"}},
	} {
		t.Chdir(c.dir)
		for _, format := range []string{"csv", "json"} {
			got := runTwice(t, "out."+format, append(c.args, "--format", format)...)
			a, b := strings.Split(got[0], "\n"), strings.Split(got[1], "\n")
			if len(a) != len(b) {
				t.Fatalf("%s %s: %d and %d lines", c.args[0], format, len(a), len(b))
			}
			var diff []string
			for i := range a {
				if a[i] != b[i] {
					diff = append(diff, a[i]+" | "+b[i])
				}
			}
			// 1700000000 s is 2023-11-14T22:13:20Z (date -u -d @1700000000).
			if len(diff) != 1 || !strings.Contains(diff[0], "time") ||
				!strings.Contains(diff[0], "2023-11-14T22:13:20Z") || !strings.Contains(diff[0], "2023-11-14T22:14:20Z") {
				t.Errorf("%s %s: lines that differ:\n%s", c.args[0], format, strings.Join(diff, "\n"))
			}
			if strings.Contains(got[0], c.dir) || strings.Contains(got[0], os.TempDir()) {
				t.Errorf("%s %s: the record names the host's folder %s", c.args[0], format, c.dir)
			}
		}
	}
}

// TestRunRecordContents: the record of a solve names the reference set
// by its checksum, and the blank, the sample sheet and every input with
// the SHA-256 of its bytes (checked here with crypto/sha256), and the
// settings in force with defaults resolved.
func TestRunRecordContents(t *testing.T) {
	dir := t.TempDir()
	solveInputs(t, dir)
	t.Chdir(dir)
	writeScans(t, "blank.csv", solveScan("blank", []float64{0, 0, 0, 0}, 0.01, 77))
	out, errOut, code := run(t, "solve", "refs.json", "s1.csv", "wide.csv", "--blank", "blank.csv", "--samples", "sheet.csv",
		"--format", "json", "--shift", "--ceiling", "1.5")
	if code != exitOK && code != exitFlagged {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	var doc struct {
		Format string
		Schema int
		Run    provenance.Run
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	r := doc.Run
	set, err := reference.Load("refs.json")
	if err != nil {
		t.Fatal(err)
	}
	sha := func(p string) string {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		s := sha256.Sum256(b)
		return hex.EncodeToString(s[:])
	}
	if doc.Format != "huesolve-results" || doc.Schema != report.Schema || r.Tool != "huesolve" || r.Version != version {
		t.Errorf("format %s schema %d tool %s %s", doc.Format, doc.Schema, r.Tool, r.Version)
	}
	if r.Reference == nil || r.Reference.Path != "refs.json" || r.Reference.Checksum != set.Checksum {
		t.Errorf("reference set %+v, want refs.json with checksum %s", r.Reference, set.Checksum)
	}
	if r.Blank == nil || r.Blank.SHA256 != sha("blank.csv") {
		t.Errorf("blank %+v", r.Blank)
	}
	if len(r.Sheets) != 1 || r.Sheets[0].SHA256 != sha("sheet.csv") || r.Sheets[0].Role != "sample sheet" {
		t.Errorf("sheets %+v", r.Sheets)
	}
	if len(r.Inputs) != 2 || r.Inputs[0].Path != "s1.csv" || r.Inputs[0].SHA256 != sha("s1.csv") || r.Inputs[1].SHA256 != sha("wide.csv") {
		t.Errorf("inputs %+v", r.Inputs)
	}
	if strings.Join(r.Command, " ") != "huesolve solve refs.json s1.csv wide.csv --blank blank.csv --samples sheet.csv --format json --shift --ceiling 1.5" {
		t.Errorf("command %q", r.Command)
	}
	var settings []string
	for _, s := range r.Settings {
		settings = append(settings, s.Name+"="+s.Value)
	}
	want := "window=400-700 baseline=auto weighted=false shift=true max-shift=3 ceiling=1.5 quantity=as each file says (absorbance when it does not) dilution=1 path-cm=1"
	if got := strings.Join(settings, " "); got != want {
		t.Errorf("settings\n%s\nwant\n%s", got, want)
	}
}

// sha256Hex is the SHA-256 of a file's bytes, computed with crypto/sha256
// (independently of reference.FileSHA256).
func sha256Hex(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// TestHashedSkipsOversizedFiles: a file larger than the readers accept is
// recorded as not read instead of being hashed (gigabytes read for a file
// that the run refuses anyway); one at the limit's side is hashed.
func TestHashedSkipsOversizedFiles(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.csv")
	f, err := os.Create(big)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(spectrum.DefaultMaxFileBytes + 1); err != nil { // sparse
		t.Fatal(err)
	}
	f.Close()
	small := filepath.Join(dir, "small.csv")
	if err := os.WriteFile(small, []byte("nm,A\n400,0.1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var got []provenance.File
	for _, p := range []string{big, small} {
		var d spectrum.Digest
		_, _ = spectrum.ReadFile(p, spectrum.ReadOptions{Digest: &d})
		got = append(got, inputRecord(p, &d))
	}
	if len(got) != 2 || got[0].SHA256 != "" || !strings.HasPrefix(got[0].Note, "not read: larger than") {
		t.Errorf("big file recorded as %+v", got)
	}
	// sha256sum of "nm,A\n400,0.1\n" (Go's crypto/sha256 gives the same).
	want := fmt.Sprintf("%x", sha256.Sum256([]byte("nm,A\n400,0.1\n")))
	if len(got) == 2 && (got[1].Path != small || got[1].SHA256 != want) {
		t.Errorf("small file recorded as %+v, want SHA-256 %s", got[1], want)
	}
}
