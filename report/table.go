package report

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"

	"huesolve/internal/pkgerr"
	"huesolve/lab"
	"huesolve/unmix"
)

// DefaultWidth is the table width for a terminal whose width is not
// known.
const DefaultWidth = 100

// Sample names are cut to softNameWidth before fit figures are dropped
// to fit a terminal, and to minNameWidth after.
const (
	softNameWidth = 24
	minNameWidth  = 12
)

// tableWriter collects results and, on Close, prints a table: at full
// width (width 0, for a file or a pipe), or sized for a terminal of the
// given width, saying in a line after the legend what was shortened and
// how to see everything. One row per sample with each compound's
// concentration +- standard error (digits matched to the error) and its
// flags, the fit figures that fit (reduced chi-square, RMS residual,
// Durbin-Watson, dropped first as space runs out), the sample's flags,
// and a legend of the flags that appear. Rows are kept as text until
// Close, so for very large batches prefer CSV or JSON.
type tableWriter struct {
	w      io.Writer
	l      Layout
	width  int
	rows   [][]string
	seen   map[unmix.Flag]bool
	failed int
	// factors are each row's dilution and path length (cm), shown in
	// columns of their own when any row's differs from 1 / Layout.PathCM.
	factors [][2]float64
	// explain holds, with Layout.Explain, each sample's model scores.
	explain []string
	lab     *lab.Summary // the lab section after the table, if any
}

// newTableWriter returns a table writer; width 0 (or less) means no
// limit: every column and full names.
func newTableWriter(w io.Writer, l Layout, width int) *tableWriter {
	return &tableWriter{w: w, l: l, width: width, seen: map[unmix.Flag]bool{}}
}

// fit-figure columns, in the order they are given up when space runs out
// (last first).
var figureCols = []string{"χ²/dof", "RMS", "DW"}

// Write adds a sample's row.
func (t *tableWriter) Write(r *unmix.Result) error {
	row := []string{termText(r.Sample)}
	for k, n := range t.l.Compounds {
		a := amountOf(r, k, n)
		if a == nil {
			row = append(row, naText)
			continue
		}
		cell := ConcText(a.Conc, a.SE)
		if len(a.Flags) > 0 {
			cell += " " + joinFlags(a.Flags, ",")
			for _, f := range a.Flags {
				t.seen[f] = true
			}
		}
		row = append(row, cell)
	}
	row = append(row, fixed(r.ChiSqRed, 2), sig(r.RMS, 2), fixed(r.DW, 2))
	for i := range t.l.Interferents {
		cell := naText
		if i < len(r.Interferents) {
			cell = ConcText(r.Interferents[i].Amount, r.Interferents[i].SE)
		}
		row = append(row, cell)
	}
	if t.l.Auto {
		row = append(row, termText(r.Model))
	}
	if t.l.Explain {
		t.explain = append(t.explain, explainText(r))
	}
	flags := sampleFlagsText(r)
	for _, f := range r.Flags {
		t.seen[f] = true
	}
	if r.SuggestDilution > 0 {
		flags = strings.TrimSpace(flags + fmt.Sprintf(" (dilute %sx)", num(r.SuggestDilution)))
	}
	t.rows = append(t.rows, append(row, flags))
	t.factors = append(t.factors, [2]float64{r.Dilution, r.PathCM})
	return nil
}

// factorColumns adds, before the flags, a dilution column when any
// sample's dilution is not 1 and a path column when any sample's path is
// not the reference set's: a result scaled by a factor says so beside it.
func (t *tableWriter) factorColumns(header []string) []string {
	dil, path := false, false
	for _, f := range t.factors {
		dil = dil || f[0] != 1
		path = path || f[1] != t.l.PathCM
	}
	if !dil && !path {
		return header
	}
	insert := func(cells []string, add ...string) []string {
		k := len(cells) - 1
		return append(cells[:k:k], append(add, cells[k])...)
	}
	var names []string
	if dil {
		names = append(names, "Dilution")
	}
	if path {
		names = append(names, "Path (cm)")
	}
	for i, row := range t.rows {
		var add []string
		if dil {
			add = append(add, num(t.factors[i][0]))
		}
		if path {
			add = append(add, num(t.factors[i][1]))
		}
		t.rows[i] = insert(row, add...)
	}
	return insert(header, names...)
}

// sampleFlagsText is the sample's flags for the table, the shift flag
// carrying the estimated shift: "sat,shift +0.83 nm".
func sampleFlagsText(r *unmix.Result) string {
	var b strings.Builder
	for i, f := range r.Flags {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(string(f))
		if f == unmix.FlagShift {
			fmt.Fprintf(&b, " %+.2f nm", r.ShiftNM)
		}
	}
	return b.String()
}

// Fail counts a failed sample; the command reports the reason on stderr.
func (t *tableWriter) Fail(string, error) error {
	t.failed++
	return nil
}

// header is the table's header row: sample, compounds with their
// units, fit figures, interferents, the model, factors and flags.
func (t *tableWriter) header() []string {
	header := []string{"Sample"}
	for k, n := range t.l.Compounds {
		if k < len(t.l.Units) && t.l.Units[k] != "" {
			n += " (" + t.l.Units[k] + ")"
		}
		header = append(header, termText(n))
	}
	header = append(header, figureCols...)
	for _, n := range t.l.Interferents {
		header = append(header, termText(n)+" (x scan)")
	}
	if t.l.Auto {
		header = append(header, "Model")
	}
	return t.factorColumns(append(header, "Flags"))
}

// Close renders the table and the legend; with no sample solved it
// writes nothing (the reasons are on standard error).
func (t *tableWriter) Close() error {
	if len(t.rows) == 0 {
		return nil
	}
	header := t.header()
	nc := len(t.l.Compounds)

	// Columns kept, and the sample column's width, to fit t.width.
	keep := make([]bool, len(header))
	for i := range keep {
		keep[i] = true
	}
	widths := make([]int, len(header))
	for i, h := range header {
		widths[i] = utf8.RuneCountInString(h)
	}
	for _, row := range t.rows {
		for i, c := range row {
			widths[i] = max(widths[i], utf8.RuneCountInString(c))
		}
	}
	full := slices.Clone(widths)
	total := func() int {
		n := 1
		for i, w := range widths {
			if keep[i] {
				n += w + 3
			}
		}
		return n
	}
	// Shorten long sample names first, then give up fit figures, then
	// shorten names further.
	shorten := func(least int) {
		if over := total() - t.width; t.width > 0 && over > 0 && widths[0] > least {
			widths[0] = max(least, widths[0]-over)
		}
	}
	shorten(softNameWidth)
	for drop := len(figureCols) - 1; t.width > 0 && drop >= 0 && total() > t.width; drop-- {
		keep[1+nc+drop] = false
	}
	shorten(minNameWidth)
	nameW := widths[0]

	table := tablewriter.NewTable(t.w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAutoWrap(tw.WrapNone),
		tablewriter.WithHeaderAutoWrap(tw.WrapNone),
		tablewriter.WithTrimSpace(tw.Off),
	)
	pick := func(cells []string) []string {
		out := make([]string, 0, len(cells))
		for i, c := range cells {
			if !keep[i] {
				continue
			}
			if i == 0 {
				c = cut(c, nameW)
			}
			out = append(out, c)
		}
		return out
	}
	table.Header(pick(header))
	for _, row := range t.rows {
		if err := table.Append(pick(row)); err != nil {
			return pkgerr.Errorf("report", "table: %w", err)
		}
	}
	if err := table.Render(); err != nil {
		return pkgerr.Errorf("report", "table: %w", err)
	}
	var b strings.Builder
	if len(t.seen) > 0 {
		b.WriteString("Flags (! needs attention):\n")
		var fs []unmix.Flag
		for _, f := range unmix.AllFlags() {
			if t.seen[f] {
				fs = append(fs, f)
			}
		}
		b.WriteString(unmix.Legend(fs...))
	}
	if len(t.explain) > 0 {
		fmt.Fprintf(&b, "Model choice per sample: a term is added while the F-test of the drop in residual sum of squares\n"+
			"gives p below its level (%g; %g for a term that can imitate a compound).\n", unmix.AutoLevel, unmix.AutoLevelMimic)
		for _, e := range t.explain {
			b.WriteString(e)
		}
	}
	b.WriteString(shortenedNote(t.width, widths[0] < full[0], droppedCols(header, keep)))
	if _, err := io.WriteString(t.w, b.String()); err != nil || t.lab == nil {
		return err
	}
	return writeLabTable(t.w, t.lab)
}

// explainText is a sample's model scores for --explain: one line per
// candidate, indented under the sample's name and chosen model.
func explainText(r *unmix.Result) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %s\n", termText(r.Sample), termText(r.Model))
	for _, s := range r.ModelScores {
		fmt.Fprintf(&b, "  %-24s", termText(s.Model))
		switch {
		case s.Error != "":
			fmt.Fprintf(&b, " not fitted: %s", termText(s.Error))
		case s.F == nil:
			fmt.Fprintf(&b, " RSS %s on %d dof (start)", sig(s.RSS, 4), s.DoF)
		default:
			fmt.Fprintf(&b, " RSS %s on %d dof, against %s: F %s, p %s (level %g)",
				sig(s.RSS, 4), s.DoF, termText(s.Against), sig(*s.F, 4), sig(*s.P, 2), s.Level)
			if s.Screened {
				b.WriteString(", linearised, not fitted")
			}
		}
		if s.Chosen {
			b.WriteString("  <- chosen")
		}
		b.WriteByte('\n')
	}
	return b.String()
}

// ConcText formats a concentration with its standard error, giving the
// concentration the decimals of the error's second significant digit:
// "4.9882 ± 0.0073". A zero or undefined error gives the value alone.
func ConcText(c, se float64) string {
	if !finite(c) {
		return naText
	}
	if !(se > 0) || !finite(se) {
		return num(c)
	}
	dec := max(0, 1-int(math.Floor(math.Log10(se))))
	dec = min(dec, 12)
	return strconv.FormatFloat(c, 'f', dec, 64) + " ± " + strconv.FormatFloat(se, 'f', dec, 64)
}

// fixed formats v with d decimals ("n/a" if not finite).
func fixed(v float64, d int) string {
	if !finite(v) {
		return naText
	}
	return strconv.FormatFloat(v, 'f', d, 64)
}

// sig formats v with d significant digits ("n/a" if not finite).
func sig(v float64, d int) string {
	if !finite(v) {
		return naText
	}
	return strconv.FormatFloat(v, 'g', d, 64)
}

// cut shortens s to n runes, ending in "…" when cut.
func cut(s string, n int) string {
	if utf8.RuneCountInString(s) <= n {
		return s
	}
	r := []rune(s)
	return string(r[:n-1]) + "…"
}

// droppedCols names the columns of header not kept.
func droppedCols(header []string, keep []bool) []string {
	var out []string
	for i, k := range keep {
		if !k {
			out = append(out, header[i])
		}
	}
	return out
}

// shortenedNote is the one line that says a table was shortened to fit
// a terminal width columns wide (names cut, columns left out) and how to
// see everything; "" when nothing was shortened.
func shortenedNote(width int, cutNames bool, dropped []string) string {
	var what []string
	if cutNames {
		what = append(what, "names")
	}
	what = append(what, dropped...)
	if len(what) == 0 {
		return ""
	}
	return fmt.Sprintf("Cut for %d columns (%s): see all with | cat or --format csv\n", width, strings.Join(what, ", "))
}
