package main

import (
	"context"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"huesolve/batch"
	"huesolve/report"
	"huesolve/spectrum"
)

// lookOptions are the flags of huesolve look.
type lookOptions struct {
	scans scanFlags
	all   bool
	plain bool
}

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
			return runLook(cmd.Context(), cmd.OutOrStdout(), cmd.ErrOrStderr(), args, q, o)
		},
	}
	f := cmd.Flags()
	o.scans.addQuantity(f)
	f.BoolVar(&o.all, "all", false, fmt.Sprintf("list every spectrum of a wide table (default: the first %d)", report.LookRowsShown))
	f.BoolVar(&o.plain, "plain", false, "print plain tab-separated rows (for scripts) instead of boxed tables")
	return cmd
}

// runLook prints the summary of each file.
func runLook(ctx context.Context, out, errw io.Writer, args []string, q spectrum.Quantity, o lookOptions) error {
	failed := 0
	inputs := batch.ExpandInputs(args)
	for k, in := range inputs {
		file := in.Path
		if in.Err != nil {
			fmt.Fprintln(errw, "huesolve:", userMessage(in.Err))
			failed++
			continue
		}
		ss, err := spectrum.ReadFile(file, spectrum.ReadOptions{Quantity: q, Warn: warnTo(errw), Context: ctx})
		if err == nil {
			err = ctx.Err()
		}
		if interrupted(ctx, err) {
			return &exitError{code: exitInterrupt, msg: fmt.Sprintf("interrupted while reading %s, after %d of %d files", file, k, len(inputs))}
		}
		if err != nil {
			fmt.Fprintln(errw, "huesolve:", userMessage(err))
			failed++
			continue
		}
		if err := report.WriteLook(out, file, ss, report.LookOptions{All: o.all, Plain: o.plain, Gap: k > 0}); err != nil {
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
