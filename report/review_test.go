package report

import (
	"bytes"
	"encoding/xml"
	"errors"
	"io"
	"math"
	"regexp"
	"strings"
	"testing"

	"huesolve/unmix"
	"huesolve/validate"
)

// curvedResult is testResult with the curves a figure needs.
func curvedResult(name string) *unmix.Result {
	r := testResult(name)
	r.Contributions = make([][]float64, 2)
	for i := range 40 {
		l := 450 + 2*float64(i)
		a := math.Exp(-0.5 * math.Pow((l-500)/20, 2))
		e := 0.002 * math.Sin(float64(i))
		r.Grid = append(r.Grid, l)
		r.Contributions[0] = append(r.Contributions[0], a)
		r.Contributions[1] = append(r.Contributions[1], 0)
		r.BaselineCurve = append(r.BaselineCurve, 0.01)
		r.Fitted = append(r.Fitted, a+0.01)
		r.Measured = append(r.Measured, a+0.01+e)
		r.Residual = append(r.Residual, e)
		r.Noise = append(r.Noise, 0.002)
	}
	return r
}

// hostile is a name from a file that is markup.
const hostile = `</svg></td><script>alert("x")</script><img src=x onerror=alert(1)>&amp;`

// TestSolveReviewEscapes: names, sources, messages and provenance from
// files are text in the page, inside the table and inside the inline
// figures; the only script is the page's own, and nothing is fetched.
func TestSolveReviewEscapes(t *testing.T) {
	rev := NewSolveReview(testLayout)
	ok, bad := curvedResult("S1"), curvedResult(hostile)
	ok.Flags = nil
	bad.Source = hostile
	rev.Figure(0, ok)
	rev.Figure(1, bad)
	rev.Add(0, ok)
	rev.Add(1, bad)
	rev.Fail(hostile, "cannot be read: "+hostile)
	var b bytes.Buffer
	err := rev.WriteHTML(&b, ReviewContext{Command: "solve", Provenance: []Field{{Label: "Input 1", Value: hostile}},
		Cautions: []string{"Caution: " + hostile}})
	if err != nil {
		t.Fatal(err)
	}
	page := b.String()
	if n := strings.Count(strings.ToLower(page), "<script"); n != 1 {
		t.Errorf("%d <script elements, want the page's own only", n)
	}
	if strings.Contains(page, "<img") {
		t.Error("an <img> element from a name reached the page")
	}
	if n := strings.Count(page, "&lt;/svg&gt;&lt;/td&gt;&lt;script&gt;"); n < 5 {
		t.Errorf("the name is shown escaped %d times, want it in the row, source, failure, provenance, caution and caption", n)
	}
	if regexp.MustCompile(`(?i)(src|href)\s*=\s*["']?(https?:|//)|url\(|@import`).MatchString(page) {
		t.Error("the page refers to something outside itself")
	}
	for _, want := range []string{`class="flagged"`, `class="ok"`, `id="flagged-only"`, `<a href="#fig-2">`, "Content-Security-Policy"} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %s", want)
		}
	}
	// Each inline figure is well-formed XML with its text escaped.
	svgs := regexp.MustCompile(`(?s)<svg class="fig".*?</svg>`).FindAllString(page, -1)
	if len(svgs) != 2 {
		t.Fatalf("%d inline figures, want 2", len(svgs))
	}
	dec := xml.NewDecoder(strings.NewReader(svgs[1]))
	var texts []string
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("figure is not well-formed: %v", err)
		}
		if cd, ok := tok.(xml.CharData); ok {
			texts = append(texts, string(cd))
		}
	}
	if !strings.Contains(strings.Join(texts, ""), hostile) {
		t.Error("the figure's title does not hold the name as text")
	}
}

// TestSolveReviewFigureLimit: past MaxReviewFigures, figures are counted
// and the page says how many were left out.
func TestSolveReviewFigureLimit(t *testing.T) {
	rev := NewSolveReview(testLayout)
	r := testResult("late") // no curves: drawing it would fail
	rev.Figure(MaxReviewFigures, r)
	rev.Add(MaxReviewFigures, r)
	var b bytes.Buffer
	if err := rev.WriteHTML(&b, ReviewContext{Command: "solve"}); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	if !strings.Contains(page, "the other 1 are left out") {
		t.Error("the page does not say a figure was left out")
	}
	if strings.Contains(page, "<figure") || strings.Contains(page, `href="#fig-`) {
		t.Error("a figure, or a link to one, for a sample past the limit")
	}
	rev = NewSolveReview(testLayout)
	rev.Figure(0, r)
	rev.Add(0, r)
	b.Reset()
	if err := rev.WriteHTML(&b, ReviewContext{Command: "solve"}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "the figure could not be drawn: result holds no curves") {
		t.Error("a figure that cannot be drawn is not explained")
	}
}

// TestVerifyReviewRows: one row per check standard, compounds side by
// side; a standard with a failing or flagged result is highlighted, as is
// a compound that fails acceptance.
func TestVerifyReviewRows(t *testing.T) {
	checks := []validate.Check{
		{Name: "C1", Known: []float64{5, 0}, Found: []float64{5.01, 0.001}, SE: []float64{0.01, 0.01}, LOQ: []float64{0.05, 0.05}},
		{Name: "C2", Known: []float64{2, 3}, Found: []float64{2.5, 3.0}, SE: []float64{0.01, 0.01}, LOQ: []float64{0.05, 0.05}},
		{Name: "C3", Known: []float64{1, 1}, Found: []float64{1.0, 1.0}, SE: []float64{0.01, 0.01}, LOQ: []float64{0.05, 0.05},
			Flags: [][]unmix.Flag{{unmix.FlagMisfit}, nil}},
	}
	v, err := validate.Assess([]string{"amber", "teal"}, []string{"mg/L", "mg/L"}, checks, validate.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	rev := NewVerifyReview([]string{"amber", "teal"})
	var b bytes.Buffer
	v.Converted = []string{"amber: µg/mL to mg/L (x 1)"}
	cv := &validate.CrossValidation{Compounds: []string{"amber", "teal"}, Units: []string{"mg/L", "mg/L"}, Folds: 3, ByLevel: true,
		RMSECV: []float64{0.0123, 0.0456}, Failed: []string{"fold 2: too few levels"}}
	if err := rev.WriteHTML(&b, &VerifyReport{Result: v, CrossVal: cv}, ReviewContext{Command: "verify"}); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	table := page[strings.Index(page, `id="results-table"`):]
	table = table[:strings.Index(table, "</table>")]
	rows := regexp.MustCompile(`<tr class="(\w+)">\s*<td class="num" data-sort="\d">\d</td>\s*<td>(C\d)</td>`).FindAllStringSubmatch(table, -1)
	var got []string
	for _, m := range rows {
		got = append(got, m[2]+" "+m[1])
	}
	if want := "C1 ok|C2 flagged|C3 flagged"; strings.Join(got, "|") != want {
		t.Errorf("check rows %q, want %s", got, want)
	}
	if !strings.Contains(page, "amber: recovery outside the limits") || !strings.Contains(page, "amber: misfit") {
		t.Error("the reasons a row is highlighted are not shown")
	}
	if !strings.Contains(page, "FAIL: ") {
		t.Error("the failing compound's verdict is not shown")
	}
	for _, want := range []string{"Unit converted</dt><dd>amber: µg/mL to mg/L (x 1)", "3 folds, leaving out one composition",
		`data-sort="0.0456">0.046</td>`, "cross-validation: fold 2: too few levels"} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
}
