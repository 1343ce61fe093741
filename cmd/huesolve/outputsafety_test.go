//go:build unix

package main

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"huesolve/reference"
)

// Output safety: a failed run never replaces an existing -o file, -o
// refuses anything but a regular file, a symbolic link is written
// through, the file's mode is kept, -o - is standard output, and a
// failed write to standard output ends with exit code 1.

// writeOld writes "old" to path with mode perm and returns it.
func writeOld(t *testing.T, path string, perm os.FileMode) string {
	t.Helper()
	if err := os.WriteFile(path, []byte("old"), perm); err != nil {
		t.Fatal(err)
	}
	if err := os.Chmod(path, perm); err != nil {
		t.Fatal(err)
	}
	return path
}

// wantOld fails when path no longer holds "old".
func wantOld(t *testing.T, what, path string) {
	t.Helper()
	got, err := os.ReadFile(path)
	if err != nil || string(got) != "old" {
		t.Errorf("%s: %s holds %q (%v), want the old file kept", what, path, got, err)
	}
}

// TestSolveFailedRunKeepsOutput: a solve that solves nothing (a misspelt
// scan path; every scan failing) leaves the -o file as it was, in CSV and
// JSON, exits 1 and says so; a partial run replaces it with the samples
// solved and exits 3.
func TestSolveFailedRunKeepsOutput(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	good := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 0, 8}, 0, 1))
	bad := filepath.Join(dir, "garbage.csv")
	if err := os.WriteFile(bad, []byte("this is not a scan\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, format := range []string{"csv", "json"} {
		out := writeOld(t, filepath.Join(dir, "results."+format), 0o644)
		for _, scans := range [][]string{{filepath.Join(dir, "a-misspelt.csv")}, {bad}, {bad, filepath.Join(dir, "nothing*.csv")}} {
			args := append([]string{"solve", ref}, scans...)
			_, errOut, code := run(t, append(args, "--format", format, "-o", out)...)
			if code != exitFailure || !strings.Contains(errOut, "nothing could be solved") || !strings.Contains(errOut, out+" left as it was") {
				t.Errorf("%s %v: exit %d, stderr:\n%s", format, scans, code, errOut)
			}
			if strings.Contains(errOut, "results in") {
				t.Errorf("%s %v: summary names a results file that was not written:\n%s", format, scans, errOut)
			}
			wantOld(t, format+" "+strings.Join(scans, " "), out)
		}
		_, errOut, code := run(t, "solve", ref, good, bad, "--format", format, "-o", out)
		b, _ := os.ReadFile(out)
		if code != exitSkipped || !strings.Contains(string(b), "A1") || !strings.Contains(errOut, "results in "+out) {
			t.Errorf("partial %s run: exit %d, file %q, stderr:\n%s", format, code, b, errOut)
		}
		if format == "json" && !strings.Contains(string(b), "garbage.csv") {
			t.Errorf("partial JSON lacks the failed input: %s", b)
		}
	}
	fresh := filepath.Join(dir, "fresh.csv")
	_, errOut, code := run(t, "solve", ref, bad, "-o", fresh)
	if _, err := os.Stat(fresh); code != exitFailure || !errors.Is(err, os.ErrNotExist) || !strings.Contains(errOut, "nothing written to "+fresh) {
		t.Errorf("failed run with a new -o: exit %d, stat %v, stderr:\n%s", code, err, errOut)
	}
}

// TestCommandsKeepOutputOnFailure: calibrate, verify, window and convert
// leave an existing -o file as it was when they fail.
func TestCommandsKeepOutputOnFailure(t *testing.T) {
	dir, refs, _ := valCase(t, 1)
	missing := filepath.Join(dir, "missing.csv")
	broken := filepath.Join(dir, "broken.json")
	if err := os.WriteFile(broken, []byte(`{"schema": 1, "grid_nm": [`), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ name, out string }{
		{"calibrate", "refs-out.json"},
		{"verify", "verify.csv"},
		{"window", "window.csv"},
		{"convert", "scan.jdx"},
	} {
		out := writeOld(t, filepath.Join(dir, c.out), 0o644)
		var args []string
		switch c.name {
		case "calibrate":
			args = []string{"calibrate", missing, "-o", out}
		case "verify":
			args = []string{"verify", refs, missing, "-o", out}
		case "window":
			args = []string{"window", broken, "-o", out}
		case "convert":
			args = []string{"convert", missing, "-o", out}
		}
		_, errOut, code := run(t, args...)
		if code != exitFailure {
			t.Errorf("%s: exit %d, want 1\n%s", c.name, code, errOut)
		}
		wantOld(t, c.name, out)
	}
}

// TestOutputRefusesSpecialFiles: every command's -o refuses a named pipe
// as a bad command line, naming it, and leaves it a pipe; with root, the
// same for a device node the test makes in its own folder.
func TestOutputRefusesSpecialFiles(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	targets := map[string]string{fifo: "a named pipe (FIFO)", dir: "a folder"}
	if os.Geteuid() == 0 {
		dev := filepath.Join(dir, "null")
		// The numbers of /dev/null (1, 3), on a node in the test's folder.
		if err := syscall.Mknod(dev, syscall.S_IFCHR|0o666, 1<<8|3); err == nil {
			targets[dev] = "a character device"
		} else {
			t.Log("no device node (mknod refused):", err)
		}
	} else {
		t.Log("device node not tried: creating one needs root (CI runs as root)")
	}
	scan := filepath.Join(dir, "chk-1.csv")
	for target, what := range targets {
		for _, args := range [][]string{
			{"solve", refs, scan},
			{"verify", refs, checks},
			{"window", refs},
			{"convert", scan, "--to", "csv"},
			{"calibrate", filepath.Join(dir, "standards.csv")},
		} {
			before, _ := os.Lstat(target)
			_, errOut, code := run(t, append(args, "-o", target)...)
			want := "-o " + target + ": it is " + what + ", not a regular file"
			if code != exitUsage || !strings.Contains(errOut, want) {
				t.Errorf("%s -o %s: exit %d, stderr:\n%s\nwant exit 2 and %q", args[0], target, code, errOut, want)
			}
			if after, err := os.Lstat(target); err != nil || after.Mode() != before.Mode() {
				t.Errorf("%s -o %s: target changed: %v %v", args[0], target, after, err)
			}
		}
	}
}

// TestOutputSymlinkAndMode: -o through a symbolic link replaces the
// regular file it leads to and keeps the link; a 0600 file stays 0600.
func TestOutputSymlinkAndMode(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	real := writeOld(t, filepath.Join(dir, "kept.csv"), 0o600)
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink("kept.csv", link); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "verify", refs, checks, "--format", "csv", "-o", link)
	if code != exitOK && code != exitFlagged {
		t.Fatalf("verify: exit %d\n%s", code, errOut)
	}
	if li, err := os.Lstat(link); err != nil || li.Mode()&os.ModeSymlink == 0 {
		t.Errorf("the link was replaced: %v", err)
	}
	b, _ := os.ReadFile(real)
	if !strings.HasPrefix(dataLines(string(b)), "record,") {
		t.Errorf("the link's target holds %q, want the verify CSV", b)
	}
	if fi, _ := os.Stat(real); fi.Mode().Perm() != 0o600 {
		t.Errorf("mode %v, want 0600 kept", fi.Mode().Perm())
	}
	// Straight onto a 0600 file, by each writer of -o.
	for _, args := range [][]string{
		{"solve", refs, filepath.Join(dir, "chk-1.csv"), "-o"},
		{"window", refs, "-o"},
		{"convert", filepath.Join(dir, "chk-1.csv"), "--to", "csv", "-o"},
		{"calibrate", filepath.Join(dir, "standards.csv"), "-o"},
	} {
		out := writeOld(t, filepath.Join(dir, "private-"+args[0]), 0o600)
		_, errOut, code := run(t, append(args, out)...)
		if code == exitFailure || code == exitUsage {
			t.Fatalf("%s: exit %d\n%s", args[0], code, errOut)
		}
		if fi, _ := os.Stat(out); fi.Mode().Perm() != 0o600 {
			t.Errorf("%s: mode %v, want 0600 kept", args[0], fi.Mode().Perm())
		}
	}
}

// TestDashOutputIsStdout: -o - writes to standard output for every
// command that takes -o, and makes no file named "-".
func TestDashOutputIsStdout(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	t.Chdir(dir)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"solve", refs, "chk-1.csv", "--format", "csv"}, "sample,source,"},
		{[]string{"verify", refs, checks, "--format", "csv"}, "record,"},
		{[]string{"window", refs, "--format", "csv"}, "lo_nm,hi_nm,"},
		{[]string{"convert", "chk-1.csv"}, "chk-1"},
		{[]string{"calibrate", "standards.csv"}, `"schema": 3`},
	} {
		out, errOut, code := run(t, append(c.args, "-o", "-")...)
		if code == exitFailure || code == exitUsage || !strings.Contains(out, c.want) {
			t.Errorf("%s -o -: exit %d, stdout lacks %q:\n%s\nstderr:\n%s", c.args[0], code, c.want, out, errOut)
		}
		if _, err := os.Lstat("-"); err == nil {
			t.Errorf("%s -o - made a file named -", c.args[0])
			os.Remove("-")
		}
		if c.args[0] == "calibrate" {
			p := filepath.Join(dir, "from-stdout.json")
			if err := os.WriteFile(p, []byte(out), 0o644); err != nil {
				t.Fatal(err)
			}
			if _, err := reference.Load(p); err != nil {
				t.Errorf("calibrate -o -: standard output is not a reference set: %v", err)
			}
			if !strings.Contains(errOut, "reference set written to standard output") {
				t.Errorf("calibrate -o -: stderr:\n%s", errOut)
			}
		}
	}
}

// failWriter fails every write, as a full disk does.
type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, syscall.ENOSPC }

// TestStdoutWriteErrors: a failed write to standard output ends every
// command with exit code 1 and one message, instead of exit 0 with
// nothing written; /dev/full too where there is one.
func TestStdoutWriteErrors(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	scan := filepath.Join(dir, "chk-1.csv")
	cases := [][]string{
		{"version"},
		{"--help"},
		{"inspect", refs},
		{"look", scan},
		{"window", refs},
		{"verify", refs, checks},
		{"verify", refs, checks, "--format", "json"},
		{"solve", refs, scan},
		{"solve", refs, scan, "--format", "csv", "-o", "-"},
		{"convert", scan, "-o", "-"},
		{"calibrate", filepath.Join(dir, "standards.csv"), "-o", filepath.Join(dir, "refs2.json")},
	}
	outs := map[string]func() (io.Writer, func()){
		"failing writer": func() (io.Writer, func()) { return failWriter{}, func() {} },
	}
	if f, err := os.OpenFile("/dev/full", os.O_WRONLY, 0); err == nil {
		outs["/dev/full"] = func() (io.Writer, func()) { return f, func() {} }
		defer f.Close()
	} else {
		t.Log("/dev/full not tried:", err)
	}
	for name, mk := range outs {
		for _, args := range cases {
			w, done := mk()
			var errb bytes.Buffer
			code := Execute(args, strings.NewReader(""), w, &errb)
			done()
			msg := "huesolve: cannot write to standard output: no space left on device\n"
			if code != exitFailure || strings.Count(errb.String(), msg) != 1 {
				t.Errorf("%s: %v: exit %d, stderr:\n%s\nwant exit 1 and once %q", name, args, code, errb.String(), msg)
			}
			if args[0] == "calibrate" && !strings.Contains(errb.String(), "written to "+args[3]) {
				t.Errorf("%s: calibrate does not say the set was written:\n%s", name, errb.String())
			}
		}
	}
}

// TestSolvePlotFailureSummary: when plots cannot be written the summary
// still counts the samples solved (they are in the results), says that
// plotting stopped and why, and the exit code is 1.
func TestSolvePlotFailureSummary(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 0, 8}, 0, 1), solveScan("A2", []float64{2, 2, 2, 2}, 0, 2))
	plots := filepath.Join(dir, "figs")
	// A folder where the first plot would go: that plot cannot be written.
	if err := os.MkdirAll(filepath.Join(plots, "0001-A1.png"), 0o755); err != nil {
		t.Fatal(err)
	}
	res := filepath.Join(dir, "results.csv")
	_, errOut, code := run(t, "solve", ref, scan, "--plots", plots, "--format", "csv", "-o", res, "-j", "1")
	if code != exitFailure {
		t.Errorf("exit %d, want 1\n%s", code, errOut)
	}
	for _, want := range []string{
		"huesolve: 2 sample(s) solved from 1 input(s): 0 flagged, 0 failed",
		"plotting stopped at the first that could not be written",
		"0001-A1.png: it is a folder, not a regular file",
		"the results were written, but not every plot could be (see above)",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	b, _ := os.ReadFile(res)
	if !strings.Contains(string(b), "A1") || !strings.Contains(string(b), "A2") {
		t.Errorf("results lack a sample:\n%s", b)
	}
}
