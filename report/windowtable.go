package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"

	"huesolve/provenance"
	"huesolve/validate"
)

// WindowReport is what window writes: the advice, the recommended window
// and its figures of merit. Its JSON form is window's --format json
// document.
type WindowReport struct {
	// Format (FormatNameWindow), Schema and Run, the run's record, open
	// the JSON document; the commands set them.
	Format      string                 `json:"format"`
	Schema      int                    `json:"schema"`
	Run         *provenance.Run        `json:"run,omitempty"`
	Reference   string                 `json:"reference_set"`
	Recommended [2]float64             `json:"recommended_nm"`
	Advice      *validate.WindowAdvice `json:"advice"`
	Merits      *validate.Merits       `json:"figures_of_merit"`
}

// WriteWindowTable prints the window advice for the terminal: what was
// searched, the recommended window and a table of the top best windows
// (the recommended one first). The figures of merit of the recommended
// window are in the JSON form and printed by verify, not here: one table
// of them per design.
func WriteWindowTable(w io.Writer, rep *WindowReport, top int) error {
	adv := rep.Advice
	writeWindowHeader(w, rep)
	t := newTable(w)
	head := []string{"", "Window (nm)", "Points", "Condition no.", "Worst SE (%)"}
	for k, n := range adv.Compounds {
		head = append(head, "SE "+n+unitSuffix(adv.Units[k]))
	}
	t.Header(head...)
	rows := []int{adv.Best}
	for _, i := range adv.Ranked {
		if len(rows) >= top {
			break
		}
		if i != adv.Best {
			rows = append(rows, i)
		}
	}
	for _, i := range rows {
		c := adv.Candidates[i]
		mark := ""
		if i == adv.Best {
			mark = "best"
		}
		row := []string{mark, fmt.Sprintf("%g-%g", c.Lo, c.Hi), strconv.Itoa(c.Points), fmt.Sprintf("%.3g", c.Cond),
			fmt.Sprintf("%.3g (%s)", 100*c.Worst, c.WorstCompound)}
		for _, se := range c.SE {
			row = append(row, fmt.Sprintf("%.3g", se))
		}
		if err := t.Append(row); err != nil {
			return fmt.Errorf("window table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("window table: %w", err)
	}
	fmt.Fprintln(w, "Worst SE: the largest predicted standard error relative to its compound's level.")
	_, err := fmt.Fprintf(w, "Figures of merit of the recommended window (LOD, LOQ, selectivity): --format json holds them; verify --window %g-%g prints them.\n",
		rep.Recommended[0], rep.Recommended[1])
	return err
}

// writeWindowHeader prints the lines above the window table: the search,
// the levels errors are judged at, and the recommendation.
func writeWindowHeader(w io.Writer, rep *WindowReport) {
	adv := rep.Advice
	fit := "unweighted fit"
	if adv.Weighted {
		fit = "weighted fit"
	}
	var lv []string
	for k, n := range adv.Compounds {
		lv = append(lv, strings.TrimSpace(fmt.Sprintf("%s %s %s", termText(n), valNum(adv.Levels[k]), termText(adv.Units[k]))))
	}
	maxW := ""
	if adv.MaxWidthNM > 0 {
		maxW = fmt.Sprintf(" and at most %g nm", adv.MaxWidthNM)
	}
	fmt.Fprintf(w, "Windows of %s: edges every %g nm, %g nm wide or more%s; baseline %s, %s;\n",
		termText(rep.Reference), adv.StepNM, adv.MinWidthNM, maxW, adv.Baseline, fit)
	fmt.Fprintf(w, "errors judged at %s. %d windows tried, %d tell every compound apart.\n\n",
		strings.Join(lv, ", "), len(adv.Candidates), len(adv.Ranked))
	best := adv.Candidates[adv.Best]
	fmt.Fprintf(w, "Recommended: %g-%g nm (%d points), worst predicted error %.3g %% (%s), condition number %.3g.\n",
		best.Lo, best.Hi, best.Points, 100*best.Worst, termText(best.WorstCompound), best.Cond)
	if adv.Best != adv.Ranked[0] {
		b0 := adv.Candidates[adv.Ranked[0]]
		fmt.Fprintf(w, "(%g-%g nm has the smallest worst error, %.3g %%, with condition number %.3g; the recommended window is within %g %% of that error and better conditioned.)\n",
			b0.Lo, b0.Hi, 100*b0.Worst, b0.Cond, 100*adv.Equivalent)
	}
	fmt.Fprintln(w)
}

// WriteWindowCSV writes one row per window tried.
func WriteWindowCSV(w io.Writer, adv *validate.WindowAdvice) error {
	cw := csv.NewWriter(w)
	head := []string{"lo_nm", "hi_nm", "points", "dropped", "condition_number", "singular", "worst_relative_se", "worst_compound"}
	for _, n := range adv.Compounds {
		head = append(head, "se_"+n)
	}
	for _, n := range adv.Compounds {
		head = append(head, "relative_se_"+n)
	}
	head = append(head, "recommended")
	if err := cw.Write(head); err != nil {
		return err
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }
	for i, c := range adv.Candidates {
		row := []string{f(c.Lo), f(c.Hi), strconv.Itoa(c.Points), strconv.Itoa(c.Dropped), f(c.Cond), strconv.FormatBool(c.Singular)}
		if c.Singular {
			row = append(row, "", "")
			for range 2 * len(adv.Compounds) {
				row = append(row, "")
			}
		} else {
			row = append(row, f(c.Worst), csvText(c.WorstCompound))
			for _, v := range c.SE {
				row = append(row, f(v))
			}
			for _, v := range c.RelSE {
				row = append(row, f(v))
			}
		}
		row = append(row, strconv.FormatBool(i == adv.Best))
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
