package main

import (
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"huesolve/internal/atomicfile"
	"huesolve/spectrum"
)

// convertOptions are the flags of huesolve convert.
type convertOptions struct {
	out   string
	to    string
	as    string
	scans scanFlags
	pick  string
}

// Output formats of convert.
const (
	convertCSV             = "csv"
	convertTSV             = "tsv"
	convertJCAMP           = "jcamp"
	convertJCAMPCompressed = "jcamp-compressed"
)

func newConvertCmd() *cobra.Command {
	var o convertOptions
	cmd := &cobra.Command{
		Use:   "convert IN -o OUT",
		Short: "Convert spectra between CSV, TSV and JCAMP-DX",
		Long: `convert reads a spectrum file in any format huesolve reads and writes it
again as CSV, TSV or JCAMP-DX. With --as absorbance, %T or T values are
converted to absorbance, A = -log10(T) = 2 - log10(%T); a transmittance of 0
cannot be converted (the sample is too dark to read and must be diluted)
and stops the conversion.

CSV and TSV output hold all spectra of the input as one table (they must
share one wavelength grid). A JCAMP-DX file holds one spectrum: pick it
with --spectrum when the input holds several. jcamp writes plain numbers
that read back exactly; jcamp-compressed writes the compact DIF form,
keeping about 7 significant digits. The output file is replaced only when
everything was written, and is never the input file. The format follows
--to, else the output file's extension; "-o -" writes to standard output,
in the input's kind (JCAMP-DX for a .jdx input, TSV for .tsv, else CSV)
unless --to says otherwise.`,
		Example: `  huesolve convert export.csv -o scan.jdx
  huesolve convert scan.jdx -o scan.csv
  huesolve convert standards.tsv -o std2.jdx --spectrum "std 2" --to jcamp-compressed
  huesolve convert percentT.csv -o absorbance.csv --as absorbance`,
		Args: wantArgs(1, 1, "one input file"),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runConvert(cmd.OutOrStdout(), cmd.ErrOrStderr(), args[0], o)
		},
	}
	f := cmd.Flags()
	f.StringVarP(&o.out, "output", "o", "", "file to write (required; - for standard output)")
	f.StringVar(&o.to, "to", "", "output format: csv, tsv, jcamp or jcamp-compressed (default: from the output file's extension; with -o -, the input's kind by its extension, else csv)")
	f.StringVar(&o.as, "as", "", "convert the values before writing: absorbance")
	o.scans.addQuantity(f)
	f.StringVar(&o.pick, "spectrum", "", "write only this spectrum of the input (its name or its number, counting from 1)")
	return cmd
}

// convertFormatFromName picks the output format from a file extension.
func convertFormatFromName(name string) string {
	switch strings.ToLower(filepath.Ext(name)) {
	case ".csv":
		return convertCSV
	case ".tsv", ".txt", ".tab":
		return convertTSV
	case ".jdx", ".dx", ".jcamp", ".jcm":
		return convertJCAMP
	}
	return ""
}

func runConvert(stdout, errw io.Writer, in string, o convertOptions) error {
	if o.out == "" {
		return usagef("convert needs an output file: -o OUT (or -o - for standard output)")
	}
	q, err := o.scans.parseQuantity()
	if err != nil {
		return err
	}
	if err := checkNotInput("-o", o.out, in); err != nil {
		return err
	}
	format, toAbs, err := o.format(in)
	if err != nil {
		return err
	}
	ss, err := convertRead(in, q, o.pick, toAbs, errw)
	if err != nil {
		return err
	}
	if (format == convertJCAMP || format == convertJCAMPCompressed) && len(ss) > 1 {
		return usagef("%s holds %d spectra but a JCAMP-DX file holds one: choose one with --spectrum (name or number)", in, len(ss))
	}
	fill := convertWriter(format, in, ss)
	if o.out == "-" {
		return fill(stdout)
	}
	if err := atomicfile.Write(o.out, fill); err != nil {
		return err
	}
	fmt.Fprintf(errw, "huesolve: wrote %d %s to %s (%s)\n", len(ss), plural(len(ss), "spectrum", "spectra"), o.out, format)
	return nil
}

// format reads --to (else the output's extension, else for standard
// output the input's kind) and --as.
func (o convertOptions) format(in string) (format string, toAbs bool, err error) {
	format = strings.ToLower(o.to)
	if format == "" && o.out == "-" {
		// To standard output: the kind of the input, so that a pipe
		// shows the file as huesolve reads it.
		if format = convertFormatFromName(in); format == "" {
			format = convertCSV
		}
	}
	if format == "" {
		format = convertFormatFromName(o.out)
		if format == "" {
			return "", false, usagef("cannot tell the output format from %q: give --to csv, tsv, jcamp or jcamp-compressed", o.out)
		}
	}
	switch format {
	case convertCSV, convertTSV, convertJCAMP, convertJCAMPCompressed:
	default:
		return "", false, usagef("--to %q: want csv, tsv, jcamp or jcamp-compressed", o.to)
	}
	switch strings.ToLower(o.as) {
	case "":
	case "absorbance", "a", "abs":
		toAbs = true
	default:
		return "", false, usagef("--as %q: only absorbance is offered", o.as)
	}
	return format, toAbs, nil
}

// convertRead reads the input, keeps the --spectrum picked (all when
// pick is empty) and converts to absorbance with --as absorbance.
func convertRead(in string, q spectrum.Quantity, pick string, toAbs bool, errw io.Writer) ([]*spectrum.Spectrum, error) {
	ss, err := spectrum.ReadFile(in, spectrum.ReadOptions{Quantity: q, Warn: warnTo(errw)})
	if err != nil {
		return nil, err
	}
	if pick != "" {
		s, err := convertPick(ss, pick, in)
		if err != nil {
			return nil, err
		}
		ss = []*spectrum.Spectrum{s}
	}
	if toAbs {
		for k, s := range ss {
			c := s.Clone()
			if err := c.ToAbsorbance(); err != nil {
				return nil, err
			}
			ss[k] = c
		}
	}
	return ss, nil
}

// convertWriter writes ss in format, naming the input in a comment.
func convertWriter(format, in string, ss []*spectrum.Spectrum) func(io.Writer) error {
	return func(w io.Writer) error {
		switch format {
		case convertCSV, convertTSV:
			delim := byte(',')
			if format == convertTSV {
				delim = '\t'
			}
			return spectrum.WriteDelimited(w, ss, spectrum.WriteOptions{Delimiter: delim,
				Comments: []string{"converted from " + filepath.Base(in) + " by huesolve " + version}})
		default:
			return spectrum.WriteJCAMP(w, ss[0], spectrum.JCAMPOptions{
				Compressed: format == convertJCAMPCompressed,
				Origin:     "converted from " + filepath.Base(in) + " by huesolve " + version,
			})
		}
	}
}

// convertPick finds a spectrum by name or 1-based number.
func convertPick(ss []*spectrum.Spectrum, pick, file string) (*spectrum.Spectrum, error) {
	for _, s := range ss {
		if s.Name == pick {
			return s, nil
		}
	}
	if n, err := strconv.Atoi(pick); err == nil {
		if n >= 1 && n <= len(ss) {
			return ss[n-1], nil
		}
		return nil, usagef("--spectrum %d: %s holds %d spectra", n, file, len(ss))
	}
	names := make([]string, 0, min(len(ss), 10))
	for _, s := range ss[:min(len(ss), 10)] {
		names = append(names, strconv.Quote(s.Name))
	}
	more := ""
	if len(ss) > 10 {
		more = ", ..."
	}
	return nil, usagef("--spectrum %q: no such spectrum in %s (it holds %s%s)", pick, file, strings.Join(names, ", "), more)
}
