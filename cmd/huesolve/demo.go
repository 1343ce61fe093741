package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
	"github.com/spf13/cobra"

	"huesolve/history"
	"huesolve/internal/demo"
)

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
dye that is not in the references. The day's run (run.csv) brackets two
lots, each weighed in triplicate, with check standards and reports them in
mg/kg of product; a QC history file holds 20 earlier days of check-standard
results, with a shift planted in one dye, for the control charts. All
names, spectra and numbers are made up; the scans are synthetic and the
same on every run.

DIR must be new or empty (or a folder an earlier demo wrote). Without DIR a
fresh temporary folder is made and its name printed. The commands' results
and plots go to DIR/results.

` + caution

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
		Args:  wantArgs(0, 1, "at most one folder"),
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

// demoStep is one or more command lines the demo runs as a user would.
type demoStep struct {
	title string
	// runs are the command lines, with absolute paths inside the demo
	// folder.
	runs [][]string
	// want lists the exit codes the command lines are expected to end with.
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
	if err := writeDemoHistory(cmd, sc, filepath.Join(dir, demo.HistoryFile)); err != nil {
		return err
	}
	fmt.Fprintf(out, "Wrote %d files into %s\n", len(files)+1, dir)
	describeDemoFiles(out, sc)
	if opt.filesOnly {
		return nil
	}
	if err := os.MkdirAll(filepath.Join(dir, demoResultsDir), 0o755); err != nil {
		return err
	}
	fmt.Fprintf(out, "Each step shows its command line after \"$\"; to repeat one yourself, change into %s first.\n", dir)
	if _, err := exec.LookPath("huesolve"); err != nil {
		fmt.Fprint(out, notOnPath)
	}
	steps := demoSteps(dir)
	root := newRootCmd()
	var missing []string
	for i, st := range steps {
		fmt.Fprintf(out, "\n== Step %d of %d: %s\n", i+1, len(steps), st.title)
		for _, args := range st.runs {
			name := args[0]
			fmt.Fprintf(out, "$ huesolve %s\n", displayArgs(dir, args))
			if c, _, err := root.Find(args[:1]); err != nil || c == root || c.Name() != name {
				fmt.Fprintf(out, "(the %s command is not in this build; skipped)\n", name)
				missing = append(missing, name)
				continue
			}
			if err := cmd.Context().Err(); err != nil {
				return err
			}
			code := Execute(args, strings.NewReader(""), out, cmd.ErrOrStderr())
			if !slices.Contains(st.want, code) {
				return fmt.Errorf("demo: step %d (huesolve %s) ended with exit code %d", i+1, name, code)
			}
		}
		if st.note != "" {
			fmt.Fprintln(out, st.note)
		}
	}
	if len(missing) > 0 {
		return &exitError{code: exitFailure, msg: "demo: not in this build: " + strings.Join(missing, ", ")}
	}
	if err := demoCompare(out, dir, sc); err != nil {
		return err
	}
	fmt.Fprint(out, demoClosing(dir))
	return nil
}

// notOnPath is said when no huesolve is on the PATH, so that the printed
// command lines would end in "command not found".
const notOnPath = `huesolve is not on your PATH, so the command lines below will not run as
printed: from the source folder run  go install ./cmd/huesolve  and put the
folder  go env GOPATH  names, plus /bin, on your PATH (or type
go run /path/to/source/cmd/huesolve  in place of huesolve).
`

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
	dir = filepath.Clean(dir)
	entries, err := os.ReadDir(dir)
	switch {
	case errors.Is(err, os.ErrNotExist):
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return "", fmt.Errorf("demo: %w", err)
		}
		return dir, nil
	case err != nil:
		return "", fmt.Errorf("demo: %w", err)
	}
	if len(entries) > 0 {
		if _, err := os.Stat(filepath.Join(dir, demo.TruthFile)); err != nil {
			return "", usagef("demo: %s is not empty and holds no earlier demo; give a new or empty folder", dir)
		}
	}
	return dir, nil
}

func describeDemoFiles(w io.Writer, sc *demo.Scenario) {
	fmt.Fprintf(w, "  %-20s %d calibration scans: blanks, each dye alone at six levels in duplicate, two mixtures\n",
		demo.StandardsSheet, len(sc.Standards))
	checks := 0
	for _, c := range sc.Checks {
		if slices.ContainsFunc(c.Conc, func(v float64) bool { return v != 0 }) {
			checks++
		}
	}
	fmt.Fprintf(w, "  %-20s %d check standards of known composition and their blank, in one wide table\n", demo.ChecksSheet, checks)
	fmt.Fprintf(w, "  %-20s %d production samples: two-column CSV, a wide table, a %%T file, a JCAMP-DX file\n",
		demo.SamplesDir+"/", len(sc.Samples))
	fmt.Fprintf(w, "  %-20s blank of the product base, scanned with the samples\n", demo.BlankFile)
	fmt.Fprintf(w, "  %-20s dilution factor and path length of each sample\n", demo.SampleSheet)
	preps := 0
	for _, l := range sc.Lots {
		preps += len(l.Preps)
	}
	fmt.Fprintf(w, "  %-20s the day's run: blanks, checks and %d lots weighed in triplicate (%d scans in run/)\n", demo.RunSheet, len(sc.Lots), preps)
	fmt.Fprintf(w, "  %-20s QC history: %d earlier days of check-standard results (invented)\n", demo.HistoryFile, demo.HistoryDays)
	fmt.Fprintf(w, "  %-20s the concentrations the demo put in (a real lab would not have this file)\n", demo.TruthFile)
}

// writeDemoHistory writes the scenario's invented history of check
// standards into a new QC history file at path (any earlier one is
// replaced): one verify run per day, marked in its command line and
// metadata as invented.
func writeDemoHistory(cmd *cobra.Command, sc *demo.Scenario, path string) error {
	tmp := path + ".new"
	for _, p := range []string{tmp, tmp + "-journal"} {
		if err := os.Remove(p); err != nil && !errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("demo: %w", err)
		}
	}
	db, err := history.Open(tmp)
	if err != nil {
		return err
	}
	for _, d := range sc.History() {
		pass := true
		run := &history.Run{Kind: history.KindVerify, Time: d.Time, ToolVersion: version,
			CommandLine: "huesolve demo (invented history: check standards of an earlier day)",
			Meta:        map[string]string{"demo": "invented"}}
		for _, c := range d.Checks {
			ok := c.Recovery >= 98 && c.Recovery <= 102 // verify's default acceptance (--recovery 98-102)
			pass = pass && ok
			run.Checks = append(run.Checks, history.CheckResult{Standard: c.Standard, Compound: c.Compound, Unit: "mg/L",
				Known: c.Known, Found: c.Found, SE: c.SE, Recovery: c.Recovery, Pass: ok})
		}
		run.Pass = &pass
		if _, err := db.Record(cmd.Context(), run); err != nil {
			db.Close()
			return err
		}
	}
	if err := db.Close(); err != nil {
		return fmt.Errorf("demo: %s: %w", tmp, err)
	}
	if err := os.Rename(tmp, path); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	return nil
}

// displayArgs shows args as typed from inside the demo folder dir.
func displayArgs(dir string, args []string) string {
	shown := make([]string, len(args))
	prefix := dir + string(filepath.Separator)
	for i, a := range args {
		if a == dir {
			a = "."
		} else if strings.HasPrefix(a, prefix) {
			a = filepath.ToSlash(strings.TrimPrefix(a, prefix))
		}
		if strings.ContainsAny(a, " \t'\"*?$") {
			a = "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
		}
		shown[i] = a
	}
	return strings.Join(shown, " ")
}

// demoSteps lists the commands the demo runs, with paths inside dir.
func demoSteps(dir string) []demoStep {
	p := func(rel string) string { return filepath.Join(dir, filepath.FromSlash(rel)) }
	res := func(rel string) string { return p(demoResultsDir + "/" + rel) }
	refs := res("refs.json")
	solve := func(extra ...string) []string {
		return append([]string{"solve", refs, p(demo.SamplesDir), "--blank", p(demo.BlankFile),
			"--samples", p(demo.SampleSheet)}, extra...)
	}
	return []demoStep{{
		title: "check how scan files in other formats read",
		runs: [][]string{{"look", p(demo.SamplesDir + "/lot-112.jdx"), p(demo.SamplesDir + "/lot-113-pct-t.csv"),
			p(demo.SamplesDir + "/run-2.csv")}},
		want: []int{exitOK},
		note: `A JCAMP-DX file, a file of percent transmittance (turned into absorbance
when used) and a wide table holding three samples: all read on the same
350-750 nm grid.`,
	}, {
		title: "build the reference set from the standards",
		runs: [][]string{{"calibrate", p(demo.StandardsSheet), "-o", refs,
			"--plots", res("plots/calibration")}},
		want: []int{exitOK},
		note: `Each dye's absorptivity spectrum came out of the standards with its standard
error; R² near 1 and no flags mean straight calibration lines over the levels
(Mandel's test found no curvature at the band maxima, and over the bands only at
the odd wavelength, as chance gives at 99 %). Plots: results/plots/calibration.`,
	}, {
		title: "how well can the dyes be told apart?",
		runs:  [][]string{{"inspect", refs}},
		want:  []int{exitOK},
		note: `Selectivity below 1 measures the overlap: Corvasine (orange) and Scarlane (red)
share much of their bands, so a single-wavelength standard curve would mix them
up. The full-spectrum fit still gives each a detection limit far below the
lowest standard.`,
	}, {
		title: "which wavelength window to fit?",
		runs:  [][]string{{"window", refs, "--plots", res("plots/window")}},
		want:  []int{exitOK},
		note: `Here nearly any wide window does equally well, so the demo fits the whole
range; with narrower or noisier bands the advice matters more.`,
	}, {
		title: "check the method on check standards of known composition",
		runs: [][]string{
			{"verify", refs, p(demo.ChecksSheet), "--crossval", p(demo.StandardsSheet),
				"--plots", res("plots/verify")},
			{"verify", refs, p(demo.ChecksSheet), "--format", "json", "-o", res("verify.json")},
		},
		want: []int{exitOK},
		note: `Every dye came back within the acceptance limits, and leaving each standard
level out of the calibration in turn (RMSECV) gives errors of the same size:
the reference set can be used for samples.`,
	}, {
		title: "solve the production samples",
		runs: [][]string{
			solve("--plots", res("plots/samples")),
			solve("--format", "csv", "-o", res("samples.csv")),
			solve("--format", "json", "-o", res("samples.json")),
		},
		want: []int{exitFlagged},
		note: `Exit code 4: two samples carry a "!" flag, as they should.
  lot-106     too dark: readings above the ceiling were left out (sat), and the
              tool asks for a dilution (dilute); lot-106-d5 is the same batch
              diluted 1+4 and scanned again, with no flag
  lot-108     holds a violet dye that is not in the reference set: no choice of
              the four dyes fits it (misfit, pattern), so its numbers are wrong
              and must not be reported
lot-107 is turbid: its haze rises towards the blue. The Model column shows
that the automatic model added a scattering term for it alone (the F-test
found the data needed it), so it carries no flag and its dyes come out right.
lot-105 carries no "!" flag: its trace of Ambrelin is found but below the
quantitation limit (<loq), a result to report as "detected, below LOQ".
Plots of every fit: results/plots/samples.`,
	}, {
		title: "what a fixed offset makes of the turbid sample",
		runs: [][]string{{"solve", refs, p(demo.SamplesDir + "/lot-107.csv"), "--blank", p(demo.BlankFile),
			"--baseline", "offset"}},
		want: []int{exitFlagged},
		note: `An offset alone cannot follow the haze (misfit, pattern), and the dyes come
out wrong. The automatic model of step 6 tried the scattering term, a linear
baseline and a wavelength shift against the offset and kept only the term
the data needed; --format json lists what each candidate scored
(model_scores). Filtering or centrifuging the solution before scanning is
still the better cure.`,
	}, {
		title: "the day's run in order: checks bracket replicate samples weighed in",
		runs:  [][]string{{"sequence", refs, p(demo.RunSheet), "--basis", "mg/kg", "--record", p(demo.HistoryFile)}},
		want:  []int{exitFlagged},
		note: `Each check standard passed, so every sample between two of them is valid;
had a check failed, the samples (and their lots) on either side of it would
be invalid. Each lot was weighed in triplicate (about 2.5 g made up to 50 mL):
the lab section gives each preparation in mg/kg of product with its
uncertainty (the mass and the flask's included) and each lot's mean ± SD.
Exit code 4: lot-115 is flagged. Its third flask was topped up past the mark
and reads about 9 % low: the lot's RSD is above the 5 % limit (!rep-rsd) and
Grubbs' test marks that preparation (!rep-outlier). Weigh the lot again rather
than report its mean. The run went into the QC history file as today's point
on each check standard's chart.`,
	}, {
		title: "a month of check standards on control charts",
		runs:  [][]string{{"history", p(demo.HistoryFile), "--baseline-runs", strconv.Itoa(demo.HistoryBaseline), "--plots", res("plots/history")}},
		want:  []int{exitFlagged},
		note: fmt.Sprintf(`The history holds %d earlier days of the same check standards (invented)
and today's run; the first %d runs set each chart's centre line and limits.
From %s on, %s's recoveries sit about half a per cent higher
(a planted shift: a new bottle of solvent, say). Every run still passed
98-102 %%, but the Westgard rules (1-3s, 2-2s, 4-1s) see it within days on
each check standard; the other dyes stay in control (a 1-2s alone is a
warning). The charts are in results/plots/history.`, demo.HistoryDays, demo.HistoryBaseline, demoShiftDate(), demo.ShiftedDye),
	}}
}

// demoShiftDate is the day the invented history's shift starts.
func demoShiftDate() string {
	days := demo.New().History()
	return days[demo.HistoryShiftDay-1].Time.Format("2 January")
}

// demoResults is the part of the solve JSON file the demo compares.
type demoResults struct {
	Format  string `json:"format"`
	Samples []struct {
		Sample  string `json:"sample"`
		Amounts []struct {
			Compound string   `json:"compound"`
			Conc     float64  `json:"conc"`
			SE       float64  `json:"se"`
			Flags    []string `json:"flags"`
		} `json:"amounts"`
		Flags []string `json:"flags"`
		Model string   `json:"model"`
	} `json:"samples"`
}

// readDemoResults reads a solve JSON file.
func readDemoResults(path string) (*demoResults, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	var r demoResults
	if err := json.Unmarshal(data, &r); err != nil {
		return nil, fmt.Errorf("demo: %s: %w", path, err)
	}
	return &r, nil
}

// demoCompare prints, for every sample, what solve found beside what the
// demo put in.
func demoCompare(w io.Writer, dir string, sc *demo.Scenario) error {
	res, err := readDemoResults(filepath.Join(dir, demoResultsDir, "samples.json"))
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "\n== Found (results/samples.json) against put in (%s), mg/L\n", demo.TruthFile)
	header := []string{"Sample"}
	for _, d := range sc.Dyes {
		header = append(header, d.Name)
	}
	header = append(header, "Sample flags")
	table := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAutoWrap(tw.WrapNone),
	)
	table.Header(header)
	for _, r := range res.Samples {
		s := sc.Sample(r.Sample)
		if s == nil {
			return fmt.Errorf("demo: results/samples.json: sample %q is not one of the demo's", r.Sample)
		}
		row := []string{r.Sample}
		for k, d := range sc.Dyes {
			cell := "-"
			for _, a := range r.Amounts {
				if a.Compound == d.Name {
					cell = strconv.FormatFloat(a.Conc, 'f', 2, 64) + " / " + strconv.FormatFloat(s.Conc[k], 'g', -1, 64)
				}
			}
			row = append(row, cell)
		}
		row = append(row, strings.Join(r.Flags, ","))
		if err := table.Append(row); err != nil {
			return fmt.Errorf("demo: table: %w", err)
		}
	}
	if err := table.Render(); err != nil {
		return fmt.Errorf("demo: table: %w", err)
	}
	fmt.Fprintln(w, "Each cell: found / put in. lot-107 is fitted with the scattering term step 6 added.")
	return nil
}

func demoClosing(dir string) string {
	return fmt.Sprintf(`
What you are looking at: %s holds the invented scans and sheets;
results/ holds what the commands wrote (the reference set refs.json,
verify.json, samples.csv and samples.json) and plots/ the figures;
qc-history.db the QC history with today's run added.

To run the same job on your own data:
  huesolve look SCAN...                       check that your files read as you expect
  huesolve calibrate STANDARDS-SHEET -o refs.json --plots plots
  huesolve inspect refs.json
  huesolve window refs.json
  huesolve verify refs.json CHECKS-SHEET
  huesolve solve refs.json SCAN... --blank BLANK --samples SAMPLE-SHEET -o results.csv --format csv
  huesolve sequence refs.json RUN-SHEET --basis mg/kg --record qc.db
  huesolve history qc.db --plots plots
README.md describes the file formats, every option and what each flag means.

Caution: results support, but do not replace, a validated analytical method.
For food, drug, water or other regulated testing follow local regulations,
the validated procedure and the responsible licensed professional.
`, dir)
}
