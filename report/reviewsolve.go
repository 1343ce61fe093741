package report

import (
	"fmt"
	"html/template"
	"io"
	"strconv"
	"sync"

	"huesolve/internal/pkgerr"
	"huesolve/lab"
	"huesolve/unmix"
)

// SolveReview collects a run of solve for its review report: Figure draws
// a sample's fit figure (from any goroutine, as the batch's workers
// solve), Add keeps its row (in run order), Fail
// records what could not be solved, and WriteHTML writes the page.
type SolveReview struct {
	l     Layout
	mu    sync.Mutex
	figs  map[int]htmlFigure // by sequence number
	extra int                // figures left out past MaxReviewFigures
	rows  []solveRow
	fails []string
	seen  map[unmix.Flag]bool
	lab   *lab.Summary // the lab tables after the results, if any
}

// solveRow is what the report keeps of one result (the batch reuses
// results once written).
type solveRow struct {
	seq     int
	cells   []htmlCell
	flagged bool
}

// NewSolveReview returns a review collector for results of layout l.
func NewSolveReview(l Layout) *SolveReview {
	return &SolveReview{l: l, figs: map[int]htmlFigure{}, seen: map[unmix.Flag]bool{}}
}

// Figure draws the fit figure of result r, sample number seq (from 0, as
// batch.Outcome.Seq), which must have been solved with curves kept
// (unmix.Options.KeepCurves). Beyond MaxReviewFigures samples it only
// counts. A figure that cannot be drawn is shown as its error.
func (s *SolveReview) Figure(seq int, r *unmix.Result) {
	if seq >= MaxReviewFigures {
		s.mu.Lock()
		s.extra++
		s.mu.Unlock()
		return
	}
	f := htmlFigure{ID: figureID(seq), Caption: termText(r.Sample), Flagged: r.Flagged()}
	svg, err := sampleFigureSVG(r, s.l.Compounds)
	if err != nil {
		f.Err = "the figure could not be drawn: " + pkgerr.Plain(err)
	} else {
		f.SVG = template.HTML(svg) // #nosec: drawn by gonum/plot, which escapes its text
	}
	s.mu.Lock()
	s.figs[seq] = f
	s.mu.Unlock()
}

// figureID is the HTML id of sample seq's figure.
func figureID(seq int) string { return "fig-" + strconv.Itoa(seq+1) }

// Add keeps the row of result r, sample number seq (from 0, as
// batch.Outcome.Seq); samples are added in run order. r may be reused
// once Add returns.
func (s *SolveReview) Add(seq int, r *unmix.Result) {
	name := htmlCell{Text: termText(r.Sample)}
	if seq < MaxReviewFigures {
		name.Link = "#" + figureID(seq)
	}
	cells := []htmlCell{numCell(strconv.Itoa(seq+1), float64(seq+1)), name, textCell(r.Source)}
	for k, n := range s.l.Compounds {
		a := amountOf(r, k, n)
		if a == nil {
			cells = append(cells, htmlCell{Text: naText})
			continue
		}
		c := numCell(ConcText(a.Conc, a.SE), a.Conc)
		if len(a.Flags) > 0 {
			c.Text += " " + joinFlags(a.Flags, ",")
			for _, f := range a.Flags {
				s.seen[f] = true
				c.Warn = c.Warn || unmix.IsWarning(f)
			}
		}
		cells = append(cells, c)
	}
	cells = append(cells, numCell(fixed(r.ChiSqRed, 2), r.ChiSqRed), numCell(sig(r.RMS, 2), r.RMS), numCell(fixed(r.DW, 2), r.DW),
		numCell(num(r.Dilution), r.Dilution), numCell(num(r.PathCM), r.PathCM))
	flags := sampleFlagsText(r)
	for _, f := range r.Flags {
		s.seen[f] = true
	}
	if r.SuggestDilution > 0 {
		flags += fmt.Sprintf(" (dilute %sx)", num(r.SuggestDilution))
	}
	if flags == "" {
		flags = "-"
	}
	cells = append(cells, htmlCell{Text: flags, Warn: r.Flagged()})
	s.rows = append(s.rows, solveRow{seq: seq, cells: cells, flagged: r.Flagged()})
}

// Fail records an input or sample that could not be solved: what names
// it, msg says why.
func (s *SolveReview) Fail(what, msg string) {
	s.fails = append(s.fails, termText(what)+": "+termText(msg))
}

// Solved is the number of rows kept.
func (s *SolveReview) Solved() int { return len(s.rows) }

// WriteHTML writes the review report of the run.
func (s *SolveReview) WriteHTML(w io.Writer, ctx ReviewContext) error {
	cols := []htmlCol{{Label: "#", Numeric: true}, {Label: "Sample"}, {Label: "Source"}}
	for k, n := range s.l.Compounds {
		if k < len(s.l.Units) && s.l.Units[k] != "" {
			n += " (" + s.l.Units[k] + ")"
		}
		cols = append(cols, htmlCol{Label: termText(n), Numeric: true})
	}
	cols = append(cols, htmlCol{Label: "χ²/dof", Numeric: true}, htmlCol{Label: "RMS", Numeric: true}, htmlCol{Label: "DW", Numeric: true},
		htmlCol{Label: "Dilution", Numeric: true}, htmlCol{Label: "Path (cm)", Numeric: true}, htmlCol{Label: "Flags"})
	t := htmlTable{ID: "results", Caption: "Results: concentration ± standard error for the original sample", Cols: cols, Filter: true}
	flagged := 0
	p := &reviewPage{}
	for _, r := range s.rows {
		t.Rows = append(t.Rows, htmlRow{Flagged: r.flagged, Cells: r.cells})
		if r.flagged {
			flagged++
		}
		if f, ok := s.figs[r.seq]; ok {
			p.Figures = append(p.Figures, f)
		}
	}
	p.Tables = append([]htmlTable{t}, labTables(s.lab)...)
	p.Counts = []Field{
		{Label: "Samples solved", Value: strconv.Itoa(len(s.rows))},
		{Label: "Flagged (!)", Value: strconv.Itoa(flagged)},
		{Label: "Failed or unreadable", Value: strconv.Itoa(len(s.fails))},
	}
	p.Failed = s.fails
	p.Legend = flagLegend(s.seen)
	if s.extra > 0 {
		p.FigureNote = fmt.Sprintf("The figures of the first %d samples are shown; the other %d are left out of this page (solve --plots DIR draws every one).",
			MaxReviewFigures, s.extra)
	}
	return renderReview(w, p, ctx)
}
