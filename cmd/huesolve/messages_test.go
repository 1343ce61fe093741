package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
)

// TestOutputNeverOverwritesInput: every command that writes -o refuses,
// as a bad command line, an output that is one of its inputs (however the
// path is spelled), and leaves the input as it was.
func TestOutputNeverOverwritesInput(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	std := filepath.Join(dir, "standards.csv")
	scan := filepath.Join(dir, "chk-1.csv")
	blank := filepath.Join(dir, "chk-blank.csv")
	stdScan := filepath.Join(dir, "std-0-2.csv")
	alias := filepath.Join(dir, ".", "sub", "..", "refs.json")
	if err := os.Mkdir(filepath.Join(dir, "sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.json")
	if err := os.Symlink(refs, link); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name   string
		victim string
		args   []string
	}{
		{"calibrate over its sheet", std, []string{"calibrate", std, "-o", std}},
		{"calibrate over a standard's scan", stdScan, []string{"calibrate", std, "-o", stdScan}},
		{"calibrate over its blank", blank, []string{"calibrate", std, "--blank", blank, "-o", blank}},
		{"solve over the reference set", refs, []string{"solve", refs, scan, "-o", refs}},
		{"solve over the reference set, spelled otherwise", refs, []string{"solve", refs, scan, "-o", alias}},
		{"solve over a link to the reference set", refs, []string{"solve", refs, scan, "-o", link}},
		{"solve over a scan", scan, []string{"solve", refs, scan, "--format", "csv", "-o", scan}},
		{"solve over a scan in a folder", scan, []string{"solve", refs, dir, "--format", "csv", "-o", scan}},
		{"solve over a scan of a glob", scan, []string{"solve", refs, filepath.Join(dir, "chk-*.csv"), "--format", "csv", "-o", scan}},
		{"solve over the blank", blank, []string{"solve", refs, scan, "--blank", blank, "-o", blank}},
		{"verify over the checks sheet", checks, []string{"verify", refs, checks, "-o", checks}},
		{"verify over a check's scan", scan, []string{"verify", refs, checks, "-o", scan}},
		{"verify over the cross-validation sheet", std, []string{"verify", refs, checks, "--crossval", std, "-o", std}},
		{"window over the reference set", refs, []string{"window", refs, "-o", refs}},
		{"convert over its input", scan, []string{"convert", scan, "-o", scan, "--to", "jcamp"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			before, err := os.ReadFile(c.victim)
			if err != nil {
				t.Fatal(err)
			}
			_, errOut, code := run(t, c.args...)
			if code != exitUsage {
				t.Errorf("exit %d, want %d (stderr %q)", code, exitUsage, errOut)
			}
			if !strings.Contains(errOut, "write the output to another file") || !strings.Contains(errOut, filepath.Base(c.victim)) {
				t.Errorf("stderr does not name the input and say why:\n%s", errOut)
			}
			after, err := os.ReadFile(c.victim)
			if err != nil || string(after) != string(before) {
				t.Errorf("%s was changed (err %v)", c.victim, err)
			}
		})
	}
	// An output that is no input is still written.
	out := filepath.Join(dir, "refs2.json")
	if _, errOut, code := run(t, "calibrate", std, "-o", out); code != exitOK {
		t.Fatalf("calibrate to a new file: exit %d\n%s", code, errOut)
	}
	if _, errOut, code := run(t, "calibrate", std, "-o", out); code != exitOK {
		t.Fatalf("calibrate over its own earlier output: exit %d\n%s", code, errOut)
	}
}

// TestArgumentCountIsUsage: a wrong number of arguments is a bad command
// line (exit 2) said in words, with the subcommand's help named.
func TestArgumentCountIsUsage(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"look"}, "look needs at least one scan file or folder"},
		{[]string{"solve", "refs.json"}, "solve needs a reference set (or --method FILE) and at least one scan; only refs.json was given"},
		{[]string{"calibrate", "a.csv", "b.csv"}, "calibrate takes one standards sheet; 2 were given: a.csv, b.csv"},
		{[]string{"verify", "refs.json"}, "verify needs a reference set (or --method FILE) and a sheet of check standards"},
		{[]string{"convert"}, "convert needs one input file"},
		{[]string{"inspect"}, "inspect needs one reference set"},
		{[]string{"window", "a", "b"}, "window takes one reference set"},
		{[]string{"demo", "a", "b"}, "demo takes at most one folder"},
		{[]string{"version", "x"}, "version takes no arguments"},
	}
	for _, c := range cases {
		_, errOut, code := run(t, c.args...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d", c.args, code, exitUsage)
		}
		help := fmt.Sprintf("run 'huesolve %s --help' for usage", c.args[0])
		if !strings.Contains(errOut, c.want) || !strings.Contains(errOut, help) {
			t.Errorf("%v: stderr\n%s\nwant %q and %q", c.args, errOut, c.want, help)
		}
		if strings.Contains(errOut, "arg(s)") {
			t.Errorf("%v: cobra's wording leaks: %s", c.args, errOut)
		}
	}
	_, errOut, code := run(t, "lok", "x")
	if code != exitUsage || !strings.Contains(errOut, `no command "lok"; did you mean look?`) {
		t.Errorf("mistyped command: exit %d, stderr %q", code, errOut)
	}
}

// TestStderrLinesCarryPrefix: every line a command writes to standard
// error starts with "huesolve:".
func TestStderrLinesCarryPrefix(t *testing.T) {
	for _, args := range [][]string{{"look"}, {"lok"}, {"solve", "--bogus"}, {"inspect", "/nonexistent/refs.json"}} {
		_, errOut, _ := run(t, args...)
		for _, l := range strings.Split(strings.TrimRight(errOut, "\n"), "\n") {
			if !strings.HasPrefix(l, "huesolve:") {
				t.Errorf("%v: stderr line %q lacks the huesolve: prefix", args, l)
			}
		}
	}
}

// TestCompletionHidden: the shell-completion command works but is not
// listed among the lab commands.
func TestCompletionHidden(t *testing.T) {
	out, _, code := run(t, "--help")
	if code != exitOK || strings.Contains(out, "completion") {
		t.Errorf("root help lists the completion command (exit %d):\n%s", code, out)
	}
	out, errOut, code := run(t, "completion", "bash")
	if code != exitOK || !strings.Contains(out, "huesolve") {
		t.Errorf("completion bash: exit %d, stderr %q", code, errOut)
	}
}

// TestMissingOutputFolder: -o into a folder that does not exist creates
// it, as --plots does, for every command with -o; a file in the way is
// refused in plain words, without package names or temporary files.
func TestMissingOutputFolder(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	std := filepath.Join(dir, "standards.csv")
	missing := filepath.Join(dir, "out", "today")
	for _, args := range [][]string{
		{"calibrate", std, "-o", filepath.Join(missing, "refs.json")},
		{"verify", refs, checks, "-o", filepath.Join(missing, "verify.csv")},
		{"solve", refs, filepath.Join(dir, "chk-1.csv"), "-o", filepath.Join(missing, "results.csv")},
		{"window", refs, "-o", filepath.Join(missing, "win.csv")},
		{"convert", filepath.Join(dir, "chk-1.csv"), "-o", filepath.Join(missing, "x.jdx")},
	} {
		out := args[len(args)-1]
		_, errOut, code := run(t, args...)
		if code != exitOK && code != exitFlagged {
			t.Errorf("%s -o %s: exit %d, stderr %q", args[0], out, code, errOut)
		}
		if _, err := os.Stat(out); err != nil {
			t.Errorf("%s: %v", args[0], err)
		}
		inWay := filepath.Join(dir, "chk-1.csv", "x", filepath.Base(out))
		args[len(args)-1] = inWay
		_, errOut, code = run(t, args...)
		want := filepath.Join(dir, "chk-1.csv") + " is a file, not a folder"
		if code != exitFailure || !strings.Contains(errOut, want) {
			t.Errorf("%s: exit %d, stderr %q; want exit 1 and %q", args[0], code, errOut, want)
		}
		for _, leak := range []string{"atomicfile", "reference:", ".tmp-", "not a directory"} {
			if strings.Contains(errOut, leak) {
				t.Errorf("%s: stderr leaks %q: %s", args[0], leak, errOut)
			}
		}
	}
	_, errOut, _ := run(t, "inspect", filepath.Join(dir, "none.json"))
	if want := "huesolve: " + filepath.Join(dir, "none.json") + " does not exist\n"; errOut != want {
		t.Errorf("missing reference set: stderr %q, want %q", errOut, want)
	}
}

func TestUserMessage(t *testing.T) {
	pe := &fs.PathError{Op: "open", Path: "x.csv", Err: fs.ErrNotExist}
	cases := []struct {
		err  error
		want string
	}{
		{pkgerr.Errorf("calibration: build", "std.csv: %w", pkgerr.New("reference", "too few standards")), "std.csv: too few standards"},
		{fmt.Errorf("blank: %w", pkgerr.Errorf("spectrum", "%w", pe)), "blank: x.csv does not exist"},
		// unmix, spectrum and baseline mark their prefixes (pkgerr): left
		// out wherever the error sits in the chain.
		{pkgerr.Errorf("unmix", "%w", pkgerr.Errorf("spectrum", "a.csv: %w", baseline.ErrUnevenGrid)), "a.csv: wavelength grid is not evenly spaced"},
		{pkgerr.Errorf("unmix", "a.csv: a.csv: bad value"), "a.csv: bad value"},
		// Words that only look like a package name stay.
		{errors.New("sheet.csv:3: compound report: unknown"), "sheet.csv:3: compound report: unknown"},
	}
	for _, c := range cases {
		if got := userMessage(c.err); got != c.want {
			t.Errorf("userMessage(%q) = %q, want %q", c.err, got, c.want)
		}
	}
}

// TestLookFolderAndGlob: look takes a folder or a glob like solve does.
func TestLookFolderAndGlob(t *testing.T) {
	dir, _, _ := valCase(t, 1)
	// The folder also holds the sheets and the reference set, which are
	// no scans: they are reported and look exits 3.
	for arg, exit := range map[string]int{dir: exitSkipped, filepath.Join(dir, "chk-*.csv"): exitOK} {
		out, errOut, code := run(t, "look", "--plain", arg)
		if code != exit {
			t.Fatalf("look %s: exit %d\n%s", arg, code, errOut)
		}
		if !strings.Contains(out, "chk-2.csv") || !strings.Contains(out, "chk-4.csv") {
			t.Errorf("look %s does not list the files:\n%s", arg, out)
		}
	}
	_, errOut, code := run(t, "look", filepath.Join(dir, "nothing-*.csv"))
	if code != exitFailure || !strings.Contains(errOut, "nothing-*.csv") {
		t.Errorf("look on a glob matching nothing: exit %d, stderr %q", code, errOut)
	}
}

// TestConvertToStdoutDefaultFormat: "-o -" without --to writes the
// input's kind.
func TestConvertToStdoutDefaultFormat(t *testing.T) {
	dir, _, _ := valCase(t, 1)
	csv := filepath.Join(dir, "chk-1.csv")
	out, errOut, code := run(t, "convert", csv, "-o", "-")
	if code != exitOK || !strings.Contains(out, "wavelength") || strings.Contains(out, "##") {
		t.Fatalf("convert csv -o -: exit %d, stderr %q, out starts %.80q", code, errOut, out)
	}
	jdx := filepath.Join(dir, "chk-1.jdx")
	if _, errOut, code := run(t, "convert", csv, "-o", jdx); code != exitOK {
		t.Fatalf("convert to jdx: exit %d\n%s", code, errOut)
	} else if !strings.HasPrefix(errOut, "huesolve: wrote 1 spectrum to ") {
		t.Errorf("convert's report lacks the prefix: %q", errOut)
	}
	out, errOut, code = run(t, "convert", jdx, "-o", "-")
	if code != exitOK || !strings.HasPrefix(out, "##TITLE=") {
		t.Fatalf("convert jdx -o -: exit %d, stderr %q, out starts %.80q", code, errOut, out)
	}
}

// TestSolveSkippedLinesPlain: a scan solve cannot read is reported once,
// without the library's package prefix, by solve and by --check-only.
func TestSolveSkippedLinesPlain(t *testing.T) {
	dir, refs, _ := valCase(t, 1)
	missing := filepath.Join(dir, "missing.csv")
	for _, extra := range [][]string{nil, {"--check-only"}} {
		args := append([]string{"solve", refs, missing, filepath.Join(dir, "chk-1.csv")}, extra...)
		_, errOut, code := run(t, args...)
		if code != exitSkipped {
			t.Errorf("%v: exit %d, want %d", extra, code, exitSkipped)
		}
		if strings.Contains(errOut, "spectrum:") || strings.Count(errOut, missing) != 1 {
			t.Errorf("%v: stderr names %s %d times or leaks a package name:\n%s", extra, missing, strings.Count(errOut, missing), errOut)
		}
	}
}

// TestWarningStyle: warnings read "huesolve: warning: ...", once, naming
// the flag that fixes them; calibrate's note about a missing unit names
// --unit.
func TestWarningStyle(t *testing.T) {
	dir := t.TempDir()
	pct := filepath.Join(dir, "pct.csv")
	if err := os.WriteFile(pct, []byte("nm,T\n400,95\n401,80.5\n402,40\n403,12\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, cmd := range [][]string{{"look", pct}, {"convert", pct, "-o", "-"}} {
		_, errOut, _ := run(t, cmd...)
		if !strings.Contains(errOut, "huesolve: warning: "+pct+": the values, read as transmittance fraction") || strings.Contains(errOut, "WARNING") ||
			!strings.Contains(errOut, "--quantity %T") || strings.Contains(errOut, "quantity option") {
			t.Errorf("%s: stderr\n%s", cmd[0], errOut)
		}
	}
	std, _ := calCase(t)
	sheet := filepath.Join(std, "nounit.csv")
	if err := os.WriteFile(sheet, []byte("scan,red\nblank-1.csv,0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, _ := run(t, "calibrate", sheet, "-o", filepath.Join(std, "x.json"))
	if !strings.Contains(errOut, "huesolve: warning: "+sheet+":1: no concentration unit stated for red") || !strings.Contains(errOut, "give one with --unit") {
		t.Errorf("calibrate without a unit: stderr\n%s", errOut)
	}
}

// TestTermLine: control characters from file contents (an ANSI escape, a
// carriage return, a bidirectional override, bytes that are not UTF-8)
// reach stderr as visible escapes, never raw; plain text is unchanged.
func TestTermLine(t *testing.T) {
	for in, want := range map[string]string{
		"lot-101: 3 points dropped":           "lot-101: 3 points dropped",
		"Grün, 5 µg/L":                        "Grün, 5 µg/L",
		"lot-\x1b[2J101 has no match":         `lot-\x1b[2J101 has no match`,
		"a\rb":                                `a\rb`,
		"name \u202egnp.exe":                  `name \u202egnp.exe`,
		"latin \xb5 byte":                     `latin \xb5 byte`,
		"tab\tkept? no: tab is a control too": `tab\tkept? no: tab is a control too`,
	} {
		if got := termLine(in); got != want {
			t.Errorf("termLine(%q) = %q, want %q", in, got, want)
		}
	}
	var buf strings.Builder
	warnTo(&buf)("sample \x1b]0;owned\x07 skipped")
	if strings.ContainsAny(buf.String(), "\x1b\x07") {
		t.Errorf("warning passed control characters: %q", buf.String())
	}
	if msg := userMessage(fmt.Errorf("scan \x1b[31mred: %w", errors.New("bad"))); strings.ContainsRune(msg, 0x1b) {
		t.Errorf("userMessage passed an escape: %q", msg)
	}
}
