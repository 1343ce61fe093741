package report

import (
	"fmt"
	"html/template"
	"io"
	"strconv"
	"strings"

	"huesolve/internal/pkgerr"
	"huesolve/unmix"
	"huesolve/validate"
)

// VerifyReview collects the fit figures of verify's check standards for
// its review report (validate.VerifyOptions.Each calls Figure), and
// WriteHTML writes the page.
type VerifyReview struct {
	compounds []string
	figs      []htmlFigure
	extra     int
}

// NewVerifyReview returns a review collector for a reference set with
// these compounds (in the set's order).
func NewVerifyReview(compounds []string) *VerifyReview {
	return &VerifyReview{compounds: compounds}
}

// Figure draws the fit figure of a check standard's result r, solved with
// curves kept; the first MaxReviewFigures are kept.
func (v *VerifyReview) Figure(standard string, r *unmix.Result) {
	n := len(v.figs)
	if n >= MaxReviewFigures {
		v.extra++
		return
	}
	f := htmlFigure{ID: figureID(n), Caption: termText(standard), Flagged: r.Flagged()}
	svg, err := sampleFigureSVG(r, v.compounds)
	if err != nil {
		f.Err = "the figure could not be drawn: " + pkgerr.Plain(err)
	} else {
		f.SVG = template.HTML(svg) // drawn by gonum/plot, which escapes its text
	}
	v.figs = append(v.figs, f)
}

// WriteHTML writes the review report of a verification: one row per
// check standard (known, found and recovery of each compound; highlighted
// when a result carries a warning flag or fails its check), the verdict
// of each compound, the figures, and ctx's parts.
func (v *VerifyReview) WriteHTML(w io.Writer, rep *VerifyReport, ctx ReviewContext) error {
	res := rep.Result
	p := &reviewPage{Figures: v.figs}
	checks := verifyCheckTable(res, len(v.figs))
	verdicts := verifyVerdictTable(res)
	p.Tables = []htmlTable{checks, verdicts}
	for i, r := range checks.Rows {
		if r.Flagged && i < len(p.Figures) {
			p.Figures[i].Flagged = true // shown by the filter with its row
		}
	}
	flagged, failed := 0, 0
	for _, r := range checks.Rows {
		if r.Flagged {
			flagged++
		}
	}
	for _, c := range res.Compounds {
		if !c.Pass {
			failed++
		}
	}
	lim := res.Limits
	p.Counts = []Field{
		{Label: "Check standards", Value: strconv.Itoa(len(checks.Rows))},
		{Label: "Flagged or failing (!)", Value: strconv.Itoa(flagged)},
		{Label: "Compounds failing acceptance", Value: fmt.Sprintf("%d of %d", failed, len(res.Compounds))},
		{Label: "Acceptance", Value: fmt.Sprintf("mean recovery %g-%g %%, RSD at most %g %%, |found| at most LOQ where absent",
			lim.RecoveryLo, lim.RecoveryHi, lim.MaxRSD)},
		{Label: "Blank", Value: termText(res.Blank)},
	}
	conv := res.Converted
	if cv := rep.CrossVal; cv != nil {
		conv = append(append([]string(nil), conv...), cv.Converted...)
		p.Tables = append(p.Tables, crossValTable(cv))
		for _, f := range cv.Failed {
			p.Failed = append(p.Failed, "cross-validation: "+termText(f))
		}
	}
	for _, c := range conv {
		p.Counts = append(p.Counts, Field{Label: "Unit converted", Value: termText(c)})
	}
	seen := map[unmix.Flag]bool{}
	for _, r := range res.Rows {
		for _, f := range r.Flags {
			seen[f] = true
		}
	}
	p.Legend = flagLegend(seen)
	if v.extra > 0 {
		p.FigureNote = fmt.Sprintf("The figures of the first %d check standards are shown; the other %d are left out of this page.", MaxReviewFigures, v.extra)
	}
	return renderReview(w, p, ctx)
}

// verifyCheckTable is one row per check standard; figs is the number of
// figures drawn (in the same order), which the names link to.
func verifyCheckTable(res *validate.Verification, figs int) htmlTable {
	t := htmlTable{ID: "results", Caption: "Check standards: known, found ± standard error, recovery", Filter: true,
		Cols: []htmlCol{{Label: "#", Numeric: true}, {Label: "Standard"}}}
	for _, c := range res.Compounds {
		u := unitSuffix(c.Unit)
		t.Cols = append(t.Cols, htmlCol{Label: termText(c.Compound) + " known" + u, Numeric: true},
			htmlCol{Label: termText(c.Compound) + " found" + u, Numeric: true}, htmlCol{Label: termText(c.Compound) + " recovery (%)", Numeric: true})
	}
	t.Cols = append(t.Cols, htmlCol{Label: "Flags"})
	nc := len(res.Compounds)
	if nc == 0 || len(res.Rows)%nc != 0 {
		return t
	}
	n := len(res.Rows) / nc // Assess lists the rows compound by compound, standards in order
	for i := range n {
		name := htmlCell{Text: termText(res.Rows[i].Standard)}
		if i < figs {
			name.Link = "#" + figureID(i)
		}
		cells := []htmlCell{numCell(strconv.Itoa(i+1), float64(i+1)), name}
		var notes []string
		bad := false
		for k := range nc {
			r := res.Rows[k*n+i]
			rec := htmlCell{Text: "-"}
			if r.Recovery != nil {
				rec = numCell(fmt.Sprintf("%.1f", *r.Recovery), *r.Recovery)
			}
			found := numCell(ConcText(r.Found, r.SE), r.Found)
			if !r.Pass {
				found.Warn, rec.Warn = true, true
				bad = true
				notes = append(notes, termText(r.Compound)+": "+failWord(r))
			}
			if len(r.Flags) > 0 {
				bad = true
				notes = append(notes, termText(r.Compound)+": "+joinFlags(r.Flags, ","))
			}
			cells = append(cells, numCell(valNum(r.Known), r.Known), found, rec)
		}
		flags := htmlCell{Text: "-"}
		if len(notes) > 0 {
			flags = htmlCell{Text: strings.Join(notes, "; "), Warn: true}
		}
		t.Rows = append(t.Rows, htmlRow{Flagged: bad, Cells: append(cells, flags)})
	}
	return t
}

// failWord says why a check result fails its own check.
func failWord(r validate.CheckRow) string {
	if r.Recovery == nil {
		return "found above its LOQ where absent"
	}
	return "recovery outside the limits"
}

// verifyVerdictTable is one row per compound with its verdict.
func verifyVerdictTable(res *validate.Verification) htmlTable {
	t := htmlTable{ID: "verdicts", Caption: "Acceptance per compound",
		Cols: []htmlCol{{Label: "Compound"}, {Label: "Holding", Numeric: true}, {Label: "Mean recovery (%)", Numeric: true},
			{Label: "RSD (%)", Numeric: true}, {Label: "Bias", Numeric: true}, {Label: "RMSEP", Numeric: true},
			{Label: "Absent, above LOQ", Numeric: true}, {Label: "Verdict"}}}
	for _, c := range res.Compounds {
		rsd := htmlCell{Text: "not judged"}
		if c.RSDJudged {
			rsd = numCell(fmt.Sprintf("%.2f", c.RSD), c.RSD)
		}
		mean := htmlCell{Text: "-"}
		if c.Holding > 0 {
			mean = numCell(fmt.Sprintf("%.2f", c.MeanRecovery), c.MeanRecovery)
		}
		verdict := htmlCell{Text: "pass"}
		if !c.Pass {
			verdict = htmlCell{Text: "FAIL: " + strings.Join(c.Why, "; "), Warn: true}
		}
		t.Rows = append(t.Rows, htmlRow{Flagged: !c.Pass, Cells: []htmlCell{textCell(c.Compound + unitSuffix(c.Unit)),
			numCell(strconv.Itoa(c.Holding), float64(c.Holding)), mean, rsd,
			numCell(errNum(c.Bias), c.Bias), numCell(errNum(c.RMSEP), c.RMSEP),
			numCell(fmt.Sprintf("%d of %d", c.AbsentFail, c.Absent), float64(c.AbsentFail)), verdict}})
	}
	return t
}

// crossValTable is the cross-validation: RMSECV per compound.
func crossValTable(cv *validate.CrossValidation) htmlTable {
	by := "one standard"
	if cv.ByLevel {
		by = "one composition with its replicates"
	}
	t := htmlTable{ID: "crossval", Caption: fmt.Sprintf("Cross-validation of the calibration: %d folds, leaving out %s at a time", cv.Folds, by),
		Cols: []htmlCol{{Label: "Compound"}, {Label: "RMSECV", Numeric: true}}}
	for k, c := range cv.Compounds {
		unit := ""
		if k < len(cv.Units) {
			unit = unitSuffix(cv.Units[k])
		}
		cell := htmlCell{Text: naText}
		if k < len(cv.RMSECV) {
			cell = numCell(errNum(cv.RMSECV[k]), cv.RMSECV[k])
		}
		t.Rows = append(t.Rows, htmlRow{Cells: []htmlCell{textCell(c + unit), cell}})
	}
	return t
}
