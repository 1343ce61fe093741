package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"huesolve/internal/demo"
)

func init() { commands = append(commands, newDemoCmd) }

const demoLong = `demo writes a complete invented case into DIR and runs the whole job on it,
printing each command line before its output, so you can see what huesolve
does before you point it at your own scans.

The case: the quality-control lab of Plumwick Confections, an invented maker
of fruit drops, checks the colourant content of its production batches. Four
invented dyes (Ambrelin, yellow; Corvasine, orange; Scarlane, red; Tidelin,
blue) have overlapping bands. The lab scans a blank and pure standards at six
levels in duplicate, plus two mixed standards; six check standards of known
composition; and fourteen production samples, among them one near the
detection limit, one too concentrated to read, one turbid and one holding a
dye that is not in the references. All names, spectra and numbers are made
up; the scans are synthetic and the same on every run.

DIR must be new or empty (or a folder an earlier demo wrote). Without DIR a
fresh temporary folder is made and its name printed. The commands' results
and plots go to DIR/results.

Caution: results support, but do not replace, a validated analytical method.
For food, drug, water or other regulated testing follow local regulations,
the validated procedure and the responsible licensed professional.`

type demoOptions struct {
	dir       string
	filesOnly bool
}

func newDemoCmd() *cobra.Command {
	var opt demoOptions
	cmd := &cobra.Command{
		Use:   "demo [DIR]",
		Short: "Run the whole job on an invented case, written into DIR",
		Long:  demoLong,
		Args:  cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				opt.dir = args[0]
			}
			return runDemo(cmd, opt)
		},
	}
	cmd.Flags().BoolVar(&opt.filesOnly, "files-only", false, "write the case's files and stop, without running the commands")
	return cmd
}

// demoResultsDir is where the demo's commands write, relative to DIR.
const demoResultsDir = "results"

// demoStep is one command the demo runs as a user would.
type demoStep struct {
	title string
	args  []string // absolute paths inside the demo folder
	// want lists the exit codes this step is expected to end with.
	want []int
	// note is printed after the output: what to look at.
	note string
}

func runDemo(cmd *cobra.Command, opt demoOptions) error {
	out := cmd.OutOrStdout()
	dir, err := demoDir(opt.dir)
	if err != nil {
		return err
	}
	sc := demo.New()
	files, err := sc.Write(dir)
	if err != nil {
		return err
	}
	fmt.Fprintf(out, "%s, checking the colourant content of its %s (an invented case).\n", sc.Lab, sc.Product)
	fmt.Fprintf(out, "Wrote %d files into %s\n", len(files), dir)
	describeDemoFiles(out, sc)
	if opt.filesOnly {
		return nil
	}
	if err := os.MkdirAll(filepath.Join(dir, demoResultsDir), 0o755); err != nil {
		return err
	}
	steps := demoSteps(dir, sc)
	root := newRootCmd()
	var missing []string
	for i, st := range steps {
		name := st.args[0]
		fmt.Fprintf(out, "\n== Step %d of %d: %s\n", i+1, len(steps), st.title)
		fmt.Fprintf(out, "$ huesolve %s\n", displayArgs(dir, st.args))
		if c, _, err := root.Find(st.args[:1]); err != nil || c == root || c.Name() != name {
			fmt.Fprintf(out, "(the %s command is not in this build yet; step skipped)\n", name)
			missing = append(missing, name)
			continue
		}
		if err := cmd.Context().Err(); err != nil {
			return err
		}
		code := Execute(st.args, strings.NewReader(""), out, cmd.ErrOrStderr())
		if !containsInt(st.want, code) {
			return fmt.Errorf("demo: step %d (huesolve %s) ended with exit code %d", i+1, name, code)
		}
		if st.note != "" {
			fmt.Fprintln(out, st.note)
		}
	}
	fmt.Fprint(out, demoClosing(dir))
	if len(missing) > 0 {
		return &exitError{code: exitFailure, msg: "demo: not in this build yet: " + strings.Join(missing, ", ")}
	}
	return nil
}

// demoDir returns the folder to write into: the one given (created if
// needed; it must be empty or hold an earlier demo) or a new temporary one.
func demoDir(dir string) (string, error) {
	if dir == "" {
		d, err := os.MkdirTemp("", "huesolve-demo-")
		if err != nil {
			return "", fmt.Errorf("demo: make a temporary folder: %w", err)
		}
		return d, nil
	}
	abs, err := filepath.Abs(dir)
	if err != nil {
		return "", fmt.Errorf("demo: %w", err)
	}
	entries, err := os.ReadDir(abs)
	switch {
	case errors.Is(err, os.ErrNotExist):
		if err := os.MkdirAll(abs, 0o755); err != nil {
			return "", fmt.Errorf("demo: %w", err)
		}
		return abs, nil
	case err != nil:
		return "", fmt.Errorf("demo: %w", err)
	}
	if len(entries) > 0 {
		if _, err := os.Stat(filepath.Join(abs, demo.TruthFile)); err != nil {
			return "", usagef("demo: %s is not empty and holds no earlier demo; give a new or empty folder", dir)
		}
	}
	return abs, nil
}

func describeDemoFiles(w io.Writer, sc *demo.Scenario) {
	fmt.Fprintf(w, "  %-20s %d calibration scans: blanks, each dye alone at six levels in duplicate, two mixtures\n",
		demo.StandardsSheet, len(sc.Standards))
	fmt.Fprintf(w, "  %-20s %d check standards of known composition, in one wide table\n", demo.ChecksSheet, len(sc.Checks))
	fmt.Fprintf(w, "  %-20s %d production samples: two-column CSV, a wide table, a %%T file, a JCAMP-DX file\n",
		demo.SamplesDir+"/", len(sc.Samples))
	fmt.Fprintf(w, "  %-20s dilution factor and path length of each sample\n", demo.SampleSheet)
	fmt.Fprintf(w, "  %-20s the concentrations the demo put in (a real lab would not have this file)\n", demo.TruthFile)
}

// displayArgs shows args as typed from inside the demo folder.
func displayArgs(dir string, args []string) string {
	shown := make([]string, len(args))
	for i, a := range args {
		if r, err := filepath.Rel(dir, a); err == nil && filepath.IsAbs(a) && !strings.HasPrefix(r, "..") {
			a = filepath.ToSlash(r)
			if a == "." {
				a = "./"
			}
		}
		if strings.ContainsAny(a, " \t'\"*?") {
			a = "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
		}
		shown[i] = a
	}
	return strings.Join(shown, " ")
}

func containsInt(list []int, v int) bool {
	for _, x := range list {
		if x == v {
			return true
		}
	}
	return false
}

// demoSteps lists the commands the demo runs.
func demoSteps(dir string, sc *demo.Scenario) []demoStep {
	p := func(rel string) string { return filepath.Join(dir, filepath.FromSlash(rel)) }
	res := func(rel string) string { return p(demoResultsDir + "/" + rel) }
	refs := res("refs.json")
	return []demoStep{
		{
			title: "build the reference set from the standards",
			args:  []string{"calibrate", p(demo.StandardsSheet), "-o", refs},
			want:  []int{exitOK, exitFlagged},
		},
		{
			title: "look at the reference set: figures of merit per dye",
			args:  []string{"inspect", refs},
			want:  []int{exitOK},
		},
		{
			title: "check the method on check standards of known composition",
			args:  []string{"verify", refs, p(demo.ChecksSheet), "--crossval", p(demo.StandardsSheet)},
			want:  []int{exitOK, exitFlagged},
		},
		{
			title: "solve the production samples",
			args:  []string{"solve", refs, p(demo.SamplesDir)},
			want:  []int{exitOK, exitFlagged},
		},
	}
}

func demoClosing(dir string) string {
	return fmt.Sprintf(`
What you are looking at: %s holds the invented scans and sheets, and
results/ what the commands wrote. Compare the solved concentrations with
invented-truth.csv, and see how each troubled sample was flagged.

To run the same job on your own data:
  huesolve calibrate STANDARDS-SHEET -o refs.json
  huesolve inspect refs.json
  huesolve verify refs.json CHECKS-SHEET
  huesolve solve refs.json SCANS...
See README.md for the file formats and what each flag means.

Caution: results support, but do not replace, a validated analytical method.
For food, drug, water or other regulated testing follow local regulations,
the validated procedure and the responsible licensed professional.
`, dir)
}
