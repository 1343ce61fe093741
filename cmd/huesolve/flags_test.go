package main

import (
	"strings"
	"testing"

	"github.com/spf13/pflag"
)

// TestSharedFlagsAgree checks that a flag bound by several commands from
// the shared groups has the same default, help text and shorthand
// everywhere it appears.
func TestSharedFlagsAgree(t *testing.T) {
	shared := []string{"window", "baseline", "weighted", "shift", "max-shift", "ceiling", "quantity", "unit",
		"format", "output", "plot-format"}
	// Flags that mean something else in a command: calibrate's -o is the
	// reference set, its --window the range kept and its --ceiling the
	// standards' (with its own default); convert's -o is required and
	// takes "-".
	// window's --baseline takes a fixed model only (auto chooses per
	// sample, window predicts one design's errors), default offset.
	own := map[string]bool{"window baseline": true, "calibrate output": true, "calibrate window": true, "calibrate ceiling": true, "convert output": true}
	root := newRootCmd()
	type seen struct {
		cmd  string
		flag *pflag.Flag
	}
	first := map[string]seen{}
	count := map[string]int{}
	for _, c := range root.Commands() {
		for _, name := range shared {
			f := c.Flags().Lookup(name)
			if f == nil || own[c.Name()+" "+name] {
				continue
			}
			count[name]++
			s, ok := first[name]
			if !ok {
				first[name] = seen{c.Name(), f}
				continue
			}
			if f.DefValue != s.flag.DefValue || f.Usage != s.flag.Usage || f.Shorthand != s.flag.Shorthand {
				t.Errorf("--%s differs between %s (%q, %q, -%s) and %s (%q, %q, -%s)", name,
					s.cmd, s.flag.DefValue, s.flag.Usage, s.flag.Shorthand, c.Name(), f.DefValue, f.Usage, f.Shorthand)
			}
		}
	}
	for _, name := range shared {
		if count[name] < 2 {
			t.Errorf("--%s is bound by %d command(s); the test expects it shared", name, count[name])
		}
	}
}

// TestSharedFlagChecks checks that solve and verify refuse the same bad
// fit and output flags with the same message.
func TestSharedFlagChecks(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--max-shift", "0"}, "--max-shift 0"},
		{[]string{"--max-shift", "51"}, "--max-shift 51"},
		{[]string{"--ceiling", "-1"}, "--ceiling -1"},
		{[]string{"--ceiling", "NaN"}, "--ceiling NaN"},
		{[]string{"--ceiling", "11"}, "--ceiling 11"},
		{[]string{"--window", "700-400"}, "--window \"700-400\""},
		{[]string{"--baseline", "wavy"}, "--baseline \"wavy\""},
		{[]string{"--quantity", "furlongs"}, "--quantity"},
		{[]string{"--format", "xml"}, "--format \"xml\""},
		{[]string{"--plot-format", "gif"}, "--plot-format \"gif\""},
	} {
		var msgs []string
		for _, cmd := range [][]string{{"solve", "refs.json", "scan.csv"}, {"verify", "refs.json", "checks.csv"}} {
			_, errOut, code := run(t, append(cmd, c.args...)...)
			if code != exitUsage || !strings.Contains(errOut, c.want) {
				t.Errorf("%s %v: exit %d, stderr %q; want %d naming %s", cmd[0], c.args, code, errOut, exitUsage, c.want)
			}
			msgs = append(msgs, strings.SplitN(errOut, "\n", 2)[0])
		}
		if msgs[0] != msgs[1] {
			t.Errorf("%v: solve says %q, verify %q", c.args, msgs[0], msgs[1])
		}
	}
}

// TestFlagHelpSaysWhat: --blank says what it is subtracted from in each
// command, and --ceiling what 0 means.
func TestFlagHelpSaysWhat(t *testing.T) {
	root := newRootCmd()
	want := map[string]string{
		"calibrate": "subtracted from every standard, instead of the sheet's blank rows",
		"solve":     "subtracted from every sample",
		"verify":    "subtracted from every check standard, instead of the checks sheet's blank rows",
	}
	for _, c := range root.Commands() {
		if f := c.Flags().Lookup("blank"); f != nil && !strings.HasSuffix(f.Usage, want[c.Name()]) || want[c.Name()] != "" && f == nil {
			t.Errorf("%s --blank: %v, want it to end %q", c.Name(), f, want[c.Name()])
		}
		if c.Name() == "solve" || c.Name() == "verify" {
			if f := c.Flags().Lookup("ceiling"); f == nil || !strings.Contains(f.Usage, "0 or unset: the reference set's ceiling") {
				t.Errorf("%s --ceiling help does not say what 0 means", c.Name())
			}
		}
	}
}
