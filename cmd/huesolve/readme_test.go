package main

import (
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/spf13/pflag"

	"huesolve/reference"
	"huesolve/unmix"
)

// readmePath is the README, relative to this package's folder.
const readmePath = "../../README.md"

var updateReadme = flag.Bool("update-readme", false,
	"refresh the demo output pasted in README.md (the lines it already shows, with today's numbers)")

// readmeLine is one line of the README with its line number.
type readmeLine struct {
	n    int
	text string
}

func readReadme(t *testing.T) []readmeLine {
	t.Helper()
	data, err := os.ReadFile(readmePath)
	if err != nil {
		t.Fatal(err)
	}
	var out []readmeLine
	for i, l := range strings.Split(string(data), "\n") {
		out = append(out, readmeLine{i + 1, l})
	}
	return out
}

// readmeSection returns the lines from the heading that starts with
// heading up to the next heading of the same or a higher level.
func readmeSection(lines []readmeLine, heading string) []readmeLine {
	level := strings.Index(heading, " ")
	for i, l := range lines {
		if !strings.HasPrefix(l.text, heading) {
			continue
		}
		j := i + 1
		for ; j < len(lines); j++ {
			h := lines[j].text
			if k := strings.Index(h, " "); k > 0 && k <= level && strings.Trim(h[:k], "#") == "" {
				break
			}
		}
		return lines[i:j]
	}
	return nil
}

// codeBlocks returns the lines inside fenced blocks of the given language.
func codeBlocks(lines []readmeLine, lang string) []readmeLine {
	var out []readmeLine
	in := false
	for _, l := range lines {
		switch {
		case !in && l.text == "```"+lang:
			in = true
		case in && l.text == "```":
			in = false
		case in:
			out = append(out, l)
		}
	}
	return out
}

var (
	boxDrawing = strings.NewReplacer("─", " ", "│", " ", "┌", " ", "┐", " ", "└", " ", "┘", " ",
		"├", " ", "┤", " ", "┬", " ", "┴", " ", "┼", " ")
	digitRun = regexp.MustCompile(`[0-9]+`)
)

// normalise makes pasted output comparable across runs and machines:
// table borders and spacing go (they follow the widths of the numbers), and
// every run of digits counts as one (numbers, dates and versions change).
func normalise(s string) string {
	s = boxDrawing.Replace(s)
	s = digitRun.ReplaceAllString(s, "9")
	return strings.Join(strings.Fields(s), " ")
}

// TestReadmeWalkthrough runs the demo as the README shows it and checks
// that the README's pasted output is what the demo prints (up to numbers
// and table widths, in order, with "…" marking cuts), then runs every
// "$ huesolve ..." line of the walkthrough again from inside the demo
// folder, as the demo tells the user they can.
//
// When only numbers or table widths changed, go test ./cmd/huesolve -run
// ReadmeWalkthrough -update-readme rewrites the pasted lines from today's
// run; changed wording needs the output pasted again by hand.
func TestReadmeWalkthrough(t *testing.T) {
	longEndToEnd(t)
	lines := readReadme(t)
	walk := readmeSection(lines, "## The demo, step by step")
	if walk == nil {
		t.Fatal("README has no section \"## The demo, step by step\"")
	}
	pasted := codeBlocks(walk, "text")
	if len(pasted) < 50 {
		t.Fatalf("the walkthrough pastes only %d lines of output", len(pasted))
	}
	var cmdLine *readmeLine
	for _, l := range codeBlocks(walk, "sh") {
		if strings.Contains(l.text, "demo plumwick") {
			cmdLine = &l
		}
	}
	if cmdLine == nil {
		t.Fatal("the walkthrough does not show the command \"huesolve demo plumwick\"")
	}

	readmeAbs, err := filepath.Abs(readmePath)
	if err != nil {
		t.Fatal(err)
	}
	t.Chdir(t.TempDir())
	out, errOut, code := run(t, "demo", "plumwick")
	if code != exitOK {
		t.Fatalf("demo plumwick: exit code %d\nstderr:\n%s", code, errOut)
	}
	var got, raw []string
	for _, l := range strings.Split(out, "\n") {
		if n := normalise(l); n != "" {
			got = append(got, n)
			raw = append(raw, l)
		}
	}
	fresh := map[int]string{} // README line number -> the demo's line today
	k := 0
	for _, l := range pasted {
		want := normalise(l.text)
		if want == "" || want == "…" {
			continue
		}
		for k < len(got) && got[k] != want {
			k++
		}
		if k == len(got) {
			t.Fatalf("README.md:%d: %q is not in the demo's output (in this order); run the demo and paste its output again.\nDemo output:\n%s",
				l.n, l.text, out)
		}
		fresh[l.n] = raw[k]
		k++
	}
	if *updateReadme {
		var b strings.Builder
		for i, l := range lines {
			if i > 0 {
				b.WriteByte('\n')
			}
			if f, ok := fresh[l.n]; ok {
				b.WriteString(f)
			} else {
				b.WriteString(l.text)
			}
		}
		if err := os.WriteFile(readmeAbs, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("refreshed %d pasted lines of %s", len(fresh), readmeAbs)
	}

	t.Chdir("plumwick")
	checkReadmeCSVFields(t, lines, filepath.Join("results", "samples.csv"))
	ran := 0
	for _, l := range pasted {
		rest, ok := strings.CutPrefix(l.text, "$ huesolve ")
		if !ok {
			continue
		}
		args := strings.Fields(rest)
		_, errOut, code := run(t, args...)
		if code != exitOK && code != exitFlagged {
			t.Errorf("README.md:%d: huesolve %s: exit code %d\nstderr:\n%s", l.n, rest, code, errOut)
		}
		ran++
	}
	if ran < 6 {
		t.Errorf("the walkthrough shows %d command lines, want every step's", ran)
	}
}

// synopsisArgs turns a README usage line into arguments: optional parts
// lose their brackets, alternatives "a|b" keep the first, and a trailing
// comment goes.
func synopsisArgs(line string) []string {
	if i := strings.Index(line, " #"); i >= 0 {
		line = line[:i]
	}
	line = strings.NewReplacer("[", "", "]", "").Replace(line)
	var args []string
	for _, f := range strings.Fields(line) {
		if i := strings.Index(f, "|"); i > 0 {
			f = f[:i]
		}
		args = append(args, f)
	}
	return args
}

// TestReadmeCommandLines checks that every huesolve command line in the
// README's sh blocks names a real command, with flags it has and an
// acceptable number of arguments.
func TestReadmeCommandLines(t *testing.T) {
	lines := readReadme(t)
	checked := 0
	for _, l := range codeBlocks(lines, "sh") {
		text := strings.TrimSpace(l.text)
		text = strings.TrimPrefix(text, "go run ./cmd/huesolve")
		text = strings.TrimPrefix(text, "huesolve")
		if text == l.text || strings.HasPrefix(strings.TrimSpace(l.text), "go test") {
			continue
		}
		args := synopsisArgs(text)
		root := newRootCmd()
		c, rest, err := root.Find(args)
		if err != nil || c == root {
			t.Errorf("README.md:%d: %q names no huesolve command", l.n, l.text)
			continue
		}
		if err := c.ParseFlags(rest); err != nil {
			t.Errorf("README.md:%d: %q: %v", l.n, l.text, err)
			continue
		}
		if err := c.ValidateArgs(c.Flags().Args()); err != nil {
			t.Errorf("README.md:%d: %q: %v", l.n, l.text, err)
		}
		checked++
	}
	if checked < 8 {
		t.Errorf("checked %d command lines; the README should show one per command", checked)
	}
}

var (
	longFlag      = regexp.MustCompile("`(--[a-z][a-z0-9-]*)")
	plainLongFlag = regexp.MustCompile(`(?:^|\s|\[)(--[a-z][a-z0-9-]*)`)
	shortFlag     = regexp.MustCompile("(?:^|[\\s\\[`])-([a-zA-Z])(?:[\\s\\]`,]|$)")
)

// TestReadmeDocumentsCommands checks the "Commands" section: every command
// has its own subsection, every option that subsection mentions exists on
// that command, and every option of the command is mentioned.
func TestReadmeDocumentsCommands(t *testing.T) {
	lines := readReadme(t)
	section := readmeSection(lines, "## Commands")
	if section == nil {
		t.Fatal("README has no section \"## Commands\"")
	}
	root := newRootCmd()
	for _, c := range root.Commands() {
		switch c.Name() {
		case "help", "completion", "version":
			continue
		}
		sub := readmeSection(section, "### `huesolve "+c.Name()+"`")
		if sub == nil {
			t.Errorf("README: no subsection \"### `huesolve %s`\" under Commands", c.Name())
			continue
		}
		mentioned := map[string]bool{}
		for _, l := range sub {
			// Code spans and sh lines both name options.
			for _, m := range longFlag.FindAllStringSubmatch(l.text, -1) {
				mentioned[m[1]] = true
			}
			for _, m := range plainLongFlag.FindAllStringSubmatch(l.text, -1) {
				mentioned[m[1]] = true
			}
			for _, m := range shortFlag.FindAllStringSubmatch(l.text, -1) {
				f := c.Flags().ShorthandLookup(m[1])
				if f == nil {
					t.Errorf("README.md:%d: %s has no option -%s", l.n, c.Name(), m[1])
					continue
				}
				mentioned["--"+f.Name] = true
			}
		}
		for f := range mentioned {
			if c.Flags().Lookup(strings.TrimPrefix(f, "--")) == nil {
				t.Errorf("README: the %s subsection documents %s, which %s does not have", c.Name(), f, c.Name())
			}
		}
		c.Flags().VisitAll(func(f *pflag.Flag) {
			if f.Name != "help" && !f.Hidden && !mentioned["--"+f.Name] {
				t.Errorf("README: the %s subsection does not mention its option --%s (%s)", c.Name(), f.Name, f.Usage)
			}
		})
	}
}

// TestReadmeFlagTable checks that the README explains every result flag
// solve and calibrate can give, and no flag that does not exist.
func TestReadmeFlagTable(t *testing.T) {
	lines := readReadme(t)
	section := readmeSection(lines, "## Result flags and what to do about them")
	if section == nil {
		t.Fatal("README has no section on result flags")
	}
	var text strings.Builder
	for _, l := range section {
		text.WriteString(l.text + "\n")
	}
	known := map[string]bool{}
	for _, f := range unmix.AllFlags() {
		known[string(f)] = true
		if !strings.Contains(text.String(), "| `"+string(f)+"` ") {
			t.Errorf("README: the flag table has no row for %s (%s)", f, unmix.Meaning(f))
		}
	}
	for _, f := range reference.Flags() {
		known[string(f.Code)] = true
		if !strings.Contains(text.String(), "`"+string(f.Code)+"`") {
			t.Errorf("README: reference-set flag %s is not explained", f.Code)
		}
	}
	for _, l := range section {
		if !strings.HasPrefix(l.text, "| `") {
			continue
		}
		code := strings.SplitN(strings.TrimPrefix(l.text, "| `"), "`", 2)[0]
		if !known[code] {
			t.Errorf("README.md:%d: flag %q is not one huesolve gives", l.n, code)
		}
	}
}

var codeSpan = regexp.MustCompile("`([A-Za-z0-9_]+)`")

// checkReadmeCSVFields checks that the README's list of solve's CSV
// columns (the paragraph starting "`solve --format csv` writes") is the
// header of the CSV file solve wrote, with compound names as NAME and
// baseline terms as TERM.
func checkReadmeCSVFields(t *testing.T, lines []readmeLine, csvPath string) {
	t.Helper()
	documented := map[string]bool{}
	in := false
	for _, l := range lines {
		if strings.HasPrefix(l.text, "`solve --format csv` writes") {
			in = true
		} else if in && strings.TrimSpace(l.text) == "" {
			break
		}
		if in {
			for _, m := range codeSpan.FindAllStringSubmatch(l.text, -1) {
				documented[m[1]] = true
			}
		}
	}
	if len(documented) == 0 {
		t.Fatal("README: no paragraph starting \"`solve --format csv` writes\"")
	}
	data, err := os.ReadFile(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	header, _, _ := strings.Cut(dataLines(string(data)), "\n")
	res, err := readDemoResults(filepath.Join(filepath.Dir(csvPath), "samples.json"))
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, a := range res.Samples[0].Amounts {
		names = append(names, a.Compound)
	}
	actual := map[string]bool{}
	for _, col := range strings.Split(strings.TrimSpace(header), ",") {
		for _, n := range names {
			if rest, ok := strings.CutPrefix(col, n+"_"); ok {
				col = "NAME_" + rest
			}
		}
		if strings.HasPrefix(col, "baseline_") {
			col = "baseline_TERM"
		}
		actual[col] = true
		if !documented[col] {
			t.Errorf("README: solve's CSV column %s is not documented", col)
		}
	}
	for f := range documented {
		if !actual[f] {
			t.Errorf("README: documents CSV column %s, which solve does not write", f)
		}
	}
}
