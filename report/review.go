package report

import (
	"bytes"
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"strconv"
	"strings"

	"gonum.org/v1/plot"

	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/unmix"
	"huesolve/validate"
)

// The review report is one self-contained HTML file for a run of solve or
// verify: the run's provenance, the results table (sortable, flagged rows
// highlighted, a filter for flagged rows), each sample's fit figure as
// inline SVG (the figure --plots draws), the reference set's summary, the
// figures of merit and the cautions. It loads nothing: the style and the
// small script that sorts and filters are inline, and its
// Content-Security-Policy forbids any fetch. Every name from a file goes
// through html/template's escaping (and termText for control characters).

// Field is one line of a run's provenance in the review report: a label
// and its value, shown in the order given.
type Field struct {
	Label string
	Value string
}

// ReviewContext is what a review report shows around its results.
type ReviewContext struct {
	// Command is what made the results, e.g. "solve" or "verify".
	Command string
	// Provenance is shown first, in order.
	Provenance []Field
	// Set is the reference set the run used (its summary is shown).
	Set *reference.Set
	// Merits are the figures of merit of the run's design; when nil,
	// MeritsNote says why there are none.
	Merits     *validate.Merits
	MeritsNote string
	// Cautions are paragraphs shown in their own section.
	Cautions []string
}

// MaxReviewFigures is the number of fit figures a review report holds at
// most (some 100 kB of SVG each): the first ones in run order. The
// report says when it leaves figures out; --plots draws every one.
const MaxReviewFigures = 200

//go:embed review.html.tmpl
var reviewSource string

// reviewTemplate is the page; its data is a reviewPage.
var reviewTemplate = template.Must(template.New("review").Parse(reviewSource))

// reviewPage is the data of reviewTemplate.
type reviewPage struct {
	Title      string
	Provenance []Field
	Counts     []Field
	Tables     []htmlTable // the results: the first one carries the filter
	Failed     []string
	Legend     []Field
	Figures    []htmlFigure
	FigureNote string
	SetLines   []string
	SetTable   *htmlTable
	SetLegend  []Field
	Merits     *htmlTable
	MeritLines []string
	MeritNote  string
	Cautions   []string
}

// htmlTable is a table of the page; sortable by its headers.
type htmlTable struct {
	ID      string
	Caption string
	Cols    []htmlCol
	Rows    []htmlRow
	Filter  bool // rows can be limited to the flagged ones
}

// htmlCol is a column header; Numeric columns sort by number.
type htmlCol struct {
	Label   string
	Numeric bool
}

// htmlRow is a table row; Flagged rows are highlighted and kept by the
// filter.
type htmlRow struct {
	Flagged bool
	Cells   []htmlCell
}

// htmlCell is one cell: its text, the key it sorts by (the number for
// numeric columns, "" for n/a, which sorts last), and a link target.
type htmlCell struct {
	Text string
	Sort string
	Link string
	Warn bool // the text names a warning flag or a failure
}

// htmlFigure is one fit figure.
type htmlFigure struct {
	ID      string
	Caption string
	SVG     template.HTML // from sampleFigureSVG: gonum/plot escapes its text
	Err     string
	Flagged bool
}

// sortKey is v as a numeric sort key, "" when it is not a number.
func sortKey(v float64) string {
	if !finite(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// numCell is a numeric cell showing text and sorting by v.
func numCell(text string, v float64) htmlCell { return htmlCell{Text: text, Sort: sortKey(v)} }

// textCell is a text cell; names from files are shown as termText shows
// them on a terminal (control characters escaped).
func textCell(s string) htmlCell { return htmlCell{Text: termText(s)} }

// renderReview fills the page's common parts from ctx and writes it.
func renderReview(w io.Writer, p *reviewPage, ctx ReviewContext) error {
	p.Title = "huesolve " + ctx.Command + ": review report"
	p.Provenance = make([]Field, len(ctx.Provenance))
	for i, f := range ctx.Provenance {
		p.Provenance[i] = Field{Label: termText(f.Label), Value: termText(f.Value)}
	}
	p.Cautions = ctx.Cautions
	if ctx.Set != nil {
		setSection(p, ctx.Set)
	}
	switch {
	case ctx.Merits != nil:
		meritSection(p, ctx.Merits)
	case ctx.MeritsNote != "":
		p.MeritNote = ctx.MeritsNote
	}
	var b bytes.Buffer
	if err := reviewTemplate.Execute(&b, p); err != nil {
		return fmt.Errorf("review report: %w", err)
	}
	_, err := b.WriteTo(w)
	return err
}

// setSection fills the reference set's part: its conditions and
// provenance, one row per compound and the meaning of the flags shown.
func setSection(p *reviewPage, set *reference.Set) {
	var b strings.Builder
	writeSetConditions(&b, set)
	writeBandLines(&b, set)
	for _, l := range strings.Split(b.String(), "\n") {
		if l = strings.TrimSpace(l); l != "" {
			p.SetLines = append(p.SetLines, l)
		}
	}
	sum := set.Summary()
	units := make([]string, len(sum))
	for i, r := range sum {
		units[i] = r.Unit
	}
	t := &htmlTable{ID: "refset", Cols: []htmlCol{{Label: "Compound"}, {Label: "Band max (nm)", Numeric: true},
		{Label: "Absorptivity ± SE (" + absorptivityUnit(commonUnit(units)) + ")", Numeric: true},
		{Label: "R²", Numeric: true}, {Label: "Levels", Numeric: true}, {Label: "Linear range"}, {Label: "Flags"}}}
	seen := map[reference.Flag]bool{}
	for _, r := range sum {
		unit := r.Unit
		if unit == "" {
			unit = "(no unit)"
		}
		flags := htmlCell{Text: "-"}
		if len(r.Flags) > 0 {
			flags = htmlCell{Text: joinFlags(r.Flags, " "), Warn: true}
			for _, f := range r.Flags {
				seen[f] = true
			}
		}
		t.Rows = append(t.Rows, htmlRow{Flagged: len(r.Flags) > 0, Cells: []htmlCell{
			textCell(r.Compound), numCell(fmt.Sprintf("%g", r.PeakNM), r.PeakNM),
			numCell(plusMinus(r.Peak, r.PeakSE), r.Peak), numCell(fmt.Sprintf("%.5f", r.R2), r.R2),
			numCell(strconv.Itoa(r.Levels), float64(r.Levels)), textCell(fmt.Sprintf("%g-%g %s", r.RangeLo, r.RangeHi, unit)), flags,
		}})
	}
	p.SetTable = t
	for _, f := range reference.Flags() {
		if seen[f.Code] {
			p.SetLegend = append(p.SetLegend, Field{Label: string(f.Code), Value: f.Meaning})
		}
	}
}

// meritSection fills the figures of merit: the design, one row per
// compound, and the reasons for a refusal.
func meritSection(p *reviewPage, m *validate.Merits) {
	fit := "unweighted fit"
	if m.Weighted {
		fit = "fit weighted by the noise model"
	}
	p.MeritLines = append(p.MeritLines,
		fmt.Sprintf("Net analyte signal over %g-%g nm (%d points), baseline %s, %s, path %g cm, noise %.2g A (RMS), condition number %s.",
			m.WindowLo, m.WindowHi, m.Points, m.Baseline, fit, m.PathCM, m.Sigma, CondText(m.Cond, m.Singular)),
		"Selectivity 1: no other compound or baseline term imitates any of the band; 0: fully imitated.",
		fmt.Sprintf("LOD = %g σ/sensitivity, LOQ = %g σ/sensitivity (ICH Q2) for a result near zero.", validate.LODFactor, validate.LOQFactor))
	units := make([]string, len(m.Compounds))
	for i, c := range m.Compounds {
		units[i] = c.Unit
	}
	t := &htmlTable{ID: "merits", Cols: []htmlCol{{Label: "Compound"}, {Label: "Sensitivity (" + sensitivityUnit(commonUnit(units)) + ")", Numeric: true},
		{Label: "Selectivity", Numeric: true}, {Label: "LOD", Numeric: true}, {Label: "LOQ", Numeric: true}, {Label: "Quantifiable"}}}
	for _, c := range m.Compounds {
		unit := ""
		if c.Unit != "" {
			unit = " " + c.Unit
		}
		lod, loq, ok := htmlCell{Text: "-"}, htmlCell{Text: "-"}, htmlCell{Text: "no: " + c.Reason, Warn: true}
		if c.Quantifiable {
			lod, loq, ok = numCell(fmt.Sprintf("%.3g%s", c.LOD, unit), c.LOD), numCell(fmt.Sprintf("%.3g%s", c.LOQ, unit), c.LOQ), htmlCell{Text: "yes"}
		}
		t.Rows = append(t.Rows, htmlRow{Flagged: !c.Quantifiable, Cells: []htmlCell{textCell(c.Compound),
			numCell(fmt.Sprintf("%.4g", c.Sensitivity), c.Sensitivity), numCell(fmt.Sprintf("%.3f", c.Selectivity), c.Selectivity), lod, loq, ok}})
	}
	p.Merits = t
}

// flagLegend lists the meaning of the sample flags seen, in the order
// unmix lists them.
func flagLegend(seen map[unmix.Flag]bool) []Field {
	var out []Field
	for _, f := range unmix.AllFlags() {
		if seen[f] {
			mark := ""
			if unmix.IsWarning(f) {
				mark = " !"
			}
			out = append(out, Field{Label: string(f) + mark, Value: unmix.Meaning(f)})
		}
	}
	return out
}

// sampleFigureSVG returns the figure SaveSamplePlot draws for r as an
// <svg> element to put inline in HTML: the XML prolog and comment before
// it are left out, and it scales to the width of the page. gonum/plot
// escapes the text it writes (html.EscapeString), so sample names and
// flags cannot close the element.
func sampleFigureSVG(r *unmix.Result, names []string) ([]byte, error) {
	sp, rp, err := samplePlots(r, names)
	if err != nil {
		return nil, err
	}
	cw, err := drawStacked("svg", samplePlotW, samplePlotH, []*plot.Plot{sp, rp}, []float64{spectraWeight, residWeight})
	if err != nil {
		return nil, pkgerr.Errorf("report", "plot of %s: %w", r.Sample, err)
	}
	var b bytes.Buffer
	if _, err := cw.WriteTo(&b); err != nil {
		return nil, err
	}
	out := b.Bytes()
	i := bytes.Index(out, []byte("<svg"))
	if i < 0 {
		return nil, pkgerr.Errorf("report", "plot of %s: no <svg> element in the drawing", r.Sample)
	}
	out = out[i:]
	// Scale with the page: the drawing keeps its viewBox, CSS sets the
	// width.
	return append([]byte(`<svg class="fig" role="img"`), out[len("<svg"):]...), nil
}
