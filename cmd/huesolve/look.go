package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
	"github.com/spf13/cobra"

	"huesolve/batch"
	"huesolve/spectrum"
)

func init() { commands = append(commands, newLookCmd) }

// lookOptions are the flags of huesolve look.
type lookOptions struct {
	scans scanFlags
	all   bool
	plain bool
}

// lookRowsShown is how many spectra of one file look lists unless --all.
const lookRowsShown = 40

func newLookCmd() *cobra.Command {
	var o lookOptions
	cmd := &cobra.Command{
		Use:   "look SCAN...",
		Short: "Show what spectra a file holds and whether they read cleanly",
		Long: `look reads each file as huesolve would (delimited text such as CSV, TSV or
semicolon exports, or JCAMP-DX) and prints, for every spectrum found, its
name, number of points, wavelength range and step, what the values are
(absorbance, %T or T) and their smallest and largest value. Warnings (for
example values that look like %T but are read as absorbance) go to stderr.

Each SCAN is a file, a folder (its files, not recursive) or a quoted glob
pattern, as for solve.

Use it before calibrating to check that files are read the way you expect.
Files that cannot be read are reported with file, line and column, and
look exits with code 3.`,
		Example: `  huesolve look scan1.csv standards.tsv blank.jdx
  huesolve look --quantity %T export.csv`,
		Args: wantArgs(1, -1, "at least one scan file or folder"),
		RunE: func(cmd *cobra.Command, args []string) error {
			q, err := o.scans.parseQuantity()
			if err != nil {
				return err
			}
			return runLook(cmd.OutOrStdout(), cmd.ErrOrStderr(), args, q, o)
		},
	}
	f := cmd.Flags()
	o.scans.addQuantity(f)
	f.BoolVar(&o.all, "all", false, fmt.Sprintf("list every spectrum of a wide table (default: the first %d)", lookRowsShown))
	f.BoolVar(&o.plain, "plain", false, "print plain tab-separated rows (for scripts) instead of boxed tables")
	return cmd
}

// runLook prints the summary of each file.
func runLook(out, errw io.Writer, args []string, q spectrum.Quantity, o lookOptions) error {
	failed := 0
	inputs := batch.ExpandInputs(args)
	for k, in := range inputs {
		file := in.Path
		if in.Err != nil {
			fmt.Fprintln(errw, "huesolve:", userMessage(in.Err))
			failed++
			continue
		}
		ss, err := spectrum.ReadFile(file, spectrum.ReadOptions{Quantity: q, Warn: warnTo(errw)})
		if err != nil {
			fmt.Fprintln(errw, "huesolve:", userMessage(err))
			failed++
			continue
		}
		if err := printLook(out, file, ss, o, k > 0); err != nil {
			return err
		}
	}
	switch {
	case failed == len(inputs):
		return &exitError{code: exitFailure, msg: "no file could be read"}
	case failed > 0:
		return &exitError{code: exitSkipped, msg: fmt.Sprintf("%d of %d files could not be read", failed, len(inputs))}
	}
	return nil
}

func printLook(out io.Writer, file string, ss []*spectrum.Spectrum, o lookOptions, gap bool) error {
	header := []string{"Spectrum", "Points", "Range (nm)", "Step (nm)", "Quantity", "Min", "Max"}
	shown := ss
	if !o.all && len(ss) > lookRowsShown {
		shown = ss[:lookRowsShown]
	}
	rows := make([][]string, 0, len(shown))
	for _, s := range shown {
		lo, hi := lookMinMax(s.Values)
		wl := s.Wavelengths
		rows = append(rows, []string{
			s.Name,
			strconv.Itoa(s.Len()),
			fmt.Sprintf("%s-%s", lookNum(wl[0]), lookNum(wl[len(wl)-1])),
			lookStep(wl),
			s.Quantity.String(),
			lookNum(lo),
			lookNum(hi),
		})
	}
	if o.plain {
		for _, r := range rows {
			if _, err := fmt.Fprintf(out, "%s\t%s\n", file, strings.Join(r, "\t")); err != nil {
				return err
			}
		}
		return nil
	}
	if gap {
		fmt.Fprintln(out)
	}
	fmt.Fprintf(out, "%s: %d %s\n", file, len(ss), lookPlural(len(ss), "spectrum", "spectra"))
	t := tablewriter.NewTable(out, tablewriter.WithHeaderAutoFormat(tw.Off))
	t.Header(header)
	for _, r := range rows {
		if err := t.Append(r); err != nil {
			return err
		}
	}
	if err := t.Render(); err != nil {
		return err
	}
	if len(shown) < len(ss) {
		fmt.Fprintf(out, "... and %d more (use --all to list them)\n", len(ss)-len(shown))
	}
	return nil
}

// lookStepTol is the relative spread of wavelength steps still called even.
const lookStepTol = 1e-6

// stepText describes the wavelength steps: "0.5" when even, else the
// smallest and largest step.
func lookStep(wl []float64) string {
	if len(wl) < 2 {
		return "-"
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 1; i < len(wl); i++ {
		d := wl[i] - wl[i-1]
		lo, hi = min(lo, d), max(hi, d)
	}
	if hi-lo <= lookStepTol*hi {
		return lookNum((wl[len(wl)-1] - wl[0]) / float64(len(wl)-1))
	}
	return fmt.Sprintf("%s-%s uneven", lookNum(lo), lookNum(hi))
}

func lookMinMax(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		lo, hi = min(lo, x), max(hi, x)
	}
	return lo, hi
}

// num formats a number for tables with up to 6 significant digits.
func lookNum(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

func lookPlural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
