package report

import (
	"io"
	"math"
	"strconv"
	"strings"

	"huesolve/internal/pkgerr"
	"huesolve/provenance"
	"huesolve/unmix"
)

// Layout names what every result of a run holds: the compounds (with
// their units) and the baseline terms, in model order, and the reference
// set's path length (PathCM; 0 when not known), against which the table
// shows a sample's own path.
type Layout struct {
	Compounds []string
	Units     []string
	Baseline  []string
	PathCM    float64
	// Run is the run's record, written at the head of CSV and JSON
	// files (nil: none).
	Run *provenance.Run
	// HeadLater: the CSV and JSON writers leave out their head (what
	// comes before the first sample: the run's record, the column names)
	// and HeadWriter.WriteHead writes it once the record is complete
	// (solve learns each input's SHA-256 as it reads it), before the
	// rest, which the caller keeps meanwhile.
	HeadLater bool
	// Auto: each sample's nuisance model is chosen (unmix.Options.Auto);
	// the results then name it (a model column, JSON's "model" and
	// "model_scores"), and a baseline term the chosen model lacks is
	// left empty rather than unavailable.
	Auto bool
	// Explain: the table ends with what each candidate of the automatic
	// model scored per sample.
	Explain bool
	// Interferents names the interferents fitted (unmix.Options.Interferents),
	// each reported as its amount in units of its scan.
	Interferents []string
	// Calibration: the standard errors include the calibration's part
	// (unmix.Model.CalibrationIncluded); JSON then gives it per amount
	// as "se_calibration".
	Calibration bool
}

// LayoutOf returns the layout of a model's results.
func LayoutOf(m *unmix.Model) Layout {
	return Layout{Compounds: m.Compounds(), Units: m.Units(), Baseline: m.BaselineTerms(), PathCM: m.PathCM(), Auto: m.Auto(), Interferents: m.Interferents(),
		Calibration: m.CalibrationIncluded()}
}

// ResultWriter writes sample results one at a time, in the order given.
// Write must not keep r after it returns (the batch runner reuses it).
// Fail records a sample or file that could not be solved. Close finishes
// the document; nothing may be written after it.
type ResultWriter interface {
	Write(r *unmix.Result) error
	Fail(source string, err error) error
	Close() error
}

// HeadWriter is implemented by the CSV and JSON result writers: with
// Layout.HeadLater, WriteHead writes to w the head they left out.
type HeadWriter interface {
	WriteHead(w io.Writer) error
}

// Formats of NewResultWriter.
const (
	FormatTable = "table"
	FormatCSV   = "csv"
	FormatJSON  = "json"
)

// NewResultWriter returns the writer for format ("table", "csv" or
// "json"). width is the terminal width for tables (0: no limit, for a
// file or a pipe: every column and full names).
func NewResultWriter(format string, w io.Writer, l Layout, width int) (ResultWriter, error) {
	switch strings.ToLower(format) {
	case FormatTable:
		return newTableWriter(w, l, width), nil
	case FormatCSV:
		return NewCSVWriter(w, l), nil
	case FormatJSON:
		return newJSONWriter(w, l), nil
	}
	return nil, pkgerr.Errorf("report", "unknown format %q (want table, csv or json)", format)
}

// naText is written in place of a number that is not defined (a NaN or an
// infinity never reaches output).
const naText = "n/a"

// numDigits is the number of significant digits written for every
// floating-point figure: enough for any concentration a UV-Vis assay can
// support, and few enough that results are byte-identical across
// platforms whose last-bit rounding may differ.
const numDigits = 6

// num formats v with numDigits significant digits ("n/a" if not finite).
func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return naText
	}
	if v == 0 {
		return "0" // also for -0
	}
	return strconv.FormatFloat(v, 'g', numDigits, 64)
}

// finite reports whether v can be written as a number.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// joinFlags joins flags with sep.
func joinFlags(fs []unmix.Flag, sep string) string {
	var b strings.Builder
	for i, f := range fs {
		if i > 0 {
			b.WriteString(sep)
		}
		b.WriteString(string(f))
	}
	return b.String()
}

// amountOf returns r's amount for compound k of the layout (matched by
// name; results of one model are in layout order, so the first try hits).
func amountOf(r *unmix.Result, k int, name string) *unmix.Amount {
	if k < len(r.Amounts) && r.Amounts[k].Compound == name {
		return &r.Amounts[k]
	}
	for i := range r.Amounts {
		if r.Amounts[i].Compound == name {
			return &r.Amounts[i]
		}
	}
	return nil
}
