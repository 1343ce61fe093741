package main

import (
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"huesolve/spectrum"
)

// The review report is tested in a real browser: headless Chromium
// (Debian's chromium package, which .ci/run installs) driven through the
// DevTools protocol by chromedp. In CI (CI set) a missing browser fails
// the test; elsewhere it skips.

// artifactsEnv names the folder the browser tests save their screenshots
// in (default: the test's temporary folder, removed afterwards).
const artifactsEnv = "HUESOLVE_ARTIFACTS"

// findChromium returns the browser to drive, failing in CI and skipping
// elsewhere when there is none.
func findChromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") != "" {
		t.Fatal("chromium is not installed: CI must run the browser test (.ci/run installs Debian's chromium package)")
	}
	t.Skip("chromium is not installed (apt-get install chromium); CI runs this test")
	return ""
}

// artifactDir is where screenshots go: $HUESOLVE_ARTIFACTS or a
// temporary folder.
func artifactDir(t *testing.T) string {
	t.Helper()
	if d := os.Getenv(artifactsEnv); d != "" {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
		return d
	}
	return t.TempDir()
}

// browser is a headless Chromium tab that records what the page
// reports as errors: console.error calls, uncaught exceptions and error
// entries of the browser log (a resource that failed to load, a blocked
// fetch).
type browser struct {
	ctx    context.Context
	mu     sync.Mutex
	errors []string
}

func newBrowser(t *testing.T) *browser {
	t.Helper()
	exe := findChromium(t)
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(exe),
		chromedp.NoSandbox, // CI runs as root
		chromedp.DisableGPU,
		chromedp.WindowSize(1300, 1000),
		chromedp.UserDataDir(t.TempDir()),
	)
	actx, cancelA := chromedp.NewExecAllocator(context.Background(), opts...)
	ctx, cancelC := chromedp.NewContext(actx)
	b := &browser{ctx: ctx}
	done := make(chan struct{})
	t.Cleanup(func() {
		cancelC()
		cancelA()
		<-done
	})
	// The first Run starts the browser; Console then listens from the
	// first page on.
	if err := chromedp.Do(ctx, chromedp.Navigate("about:blank")); err != nil {
		close(done)
		t.Fatalf("starting %s: %v", exe, err)
	}
	msgs := chromedp.Console(ctx)
	go func() {
		defer close(done)
		for m, err := range msgs {
			if err != nil {
				return
			}
			if m.Type == chromedp.ConsoleError || m.IsException() {
				b.mu.Lock()
				b.errors = append(b.errors, m.String()+" ("+m.URL+")")
				b.mu.Unlock()
			}
		}
	}()
	return b
}

// consoleErrors returns what the page reported as errors so far.
func (b *browser) consoleErrors() []string {
	b.mu.Lock()
	defer b.mu.Unlock()
	return append([]string(nil), b.errors...)
}

// do runs steps in the tab, failing the test on an error or after a
// minute.
func (b *browser) do(t *testing.T, what string, steps ...chromedp.Action[chromedp.Void]) {
	t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, time.Minute)
	defer cancel()
	if err := chromedp.Do(ctx, steps...); err != nil {
		t.Fatalf("%s: %v", what, err)
	}
}

// eval evaluates a JavaScript expression in the page into a T.
func eval[T any](t *testing.T, b *browser, expr string) T {
	t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, time.Minute)
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

// shot runs a screenshot action.
func shot(t *testing.T, b *browser, a chromedp.Action[[]byte]) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, time.Minute)
	defer cancel()
	v, err := chromedp.Run(ctx, a)
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	return v
}

// reviewScans writes the browser test's samples: plain ones, one that
// misfits (a band no compound has), one too dark for the ceiling, and
// one whose name is markup.
func reviewScans(t *testing.T, dir string) (path string, names []string) {
	t.Helper()
	odd := solveScan("odd", []float64{2, 1, 1, 1}, 0, 7)
	for i, l := range odd.Wavelengths {
		d := (l - 470) / 8
		odd.Values[i] += 0.3 * math.Exp(-d*d/2)
	}
	names = []string{"S-10", "S-9", "odd", `<script>document.title="pwned"</script>`, "S-100"}
	ss := []*spectrum.Spectrum{
		solveScan(names[0], []float64{5, 3, 2, 8}, 0, 1),
		solveScan(names[1], []float64{1, 12, 4, 3}, 0, 2),
		odd,
		solveScan(names[3], []float64{0.5, 0.3, 0.2, 0.5}, 0, 4),
		solveScan(names[4], []float64{9, 1, 1, 1}, 0, 5),
	}
	return writeScans(t, filepath.Join(dir, "scans.csv"), ss...), names
}

// TestReviewReportInBrowser: solve --report writes a page that a real
// browser loads without console errors, with one table row per sample,
// sorting by a clicked header, the flagged filter, every figure drawn,
// and a sample name that is markup shown as text.
func TestReviewReportInBrowser(t *testing.T) {
	longEndToEnd(t)
	b := newBrowser(t)
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scans, names := reviewScans(t, dir)
	page := filepath.Join(dir, "run.html")
	_, errOut, code := run(t, "solve", ref, scans, "--report", page, "-o", filepath.Join(dir, "out.csv"), "--format", "csv")
	if code != exitOK && code != exitFlagged {
		t.Fatalf("solve: exit %d\n%s", code, errOut)
	}
	if !strings.Contains(errOut, "review report written to "+page) {
		t.Errorf("stderr does not name the report:\n%s", errOut)
	}
	b.do(t, "load", chromedp.Navigate("file://"+page), chromedp.WaitReady(chromedp.CSS("#results-table")))

	rows := eval[int](t, b, `document.querySelectorAll("#results-table tbody tr").length`)
	if rows != len(names) {
		t.Errorf("results table has %d rows, want one per sample (%d)", rows, len(names))
	}
	if title := eval[string](t, b, `document.title`); title == "pwned" || !strings.Contains(title, "review report") {
		t.Errorf("page title %q: a sample name was run as a script", title)
	}
	col := func(n int) []string {
		return eval[[]string](t, b, fmt.Sprintf(
			`Array.from(document.querySelectorAll("#results-table tbody tr td:nth-child(%d)")).map(c => c.getAttribute("data-sort") ?? c.textContent)`, n))
	}
	if got := col(2); strings.Join(got, "|") != strings.Join(names, "|") {
		t.Errorf("sample cells %q, want the names as text in run order %q", got, names)
	}

	// Sorting: by name (natural order), then by chi-square both ways.
	header := func(label string) (chromedp.CSS, int) {
		n := eval[int](t, b, fmt.Sprintf(
			`Array.from(document.querySelectorAll("#results-table thead th")).findIndex(h => h.textContent === %q) + 1`, label))
		if n == 0 {
			t.Fatalf("no header %q", label)
		}
		return chromedp.CSS(fmt.Sprintf("#results-table thead th:nth-child(%d)", n)), n
	}
	sel, n := header("Sample")
	b.do(t, "sort by sample", chromedp.Click(sel))
	want := []string{names[3], "odd", "S-9", "S-10", "S-100"}
	if got := col(n); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("sorted by sample: %q, want %q", got, want)
	}
	sel, n = header("χ²/dof")
	for _, asc := range []bool{true, false} {
		b.do(t, "sort by chi-square", chromedp.Click(sel))
		if vals := col(n); !sortedNumbers(t, vals, asc) {
			t.Errorf("sorted by χ²/dof (ascending %v): %q", asc, vals)
		}
	}

	// The flagged filter keeps the flagged rows and their figures only.
	const shownRows = `Array.from(document.querySelectorAll("#results-table tbody tr")).filter(r => r.getClientRects().length > 0).length`
	const shownFigs = `Array.from(document.querySelectorAll("figure")).filter(f => f.getClientRects().length > 0).length`
	flagged := eval[int](t, b, `document.querySelectorAll("#results-table tbody tr.flagged").length`)
	if flagged == 0 || flagged == len(names) {
		t.Fatalf("%d of %d rows flagged: the test needs some of each", flagged, len(names))
	}
	b.do(t, "filter", chromedp.Click(chromedp.CSS("#flagged-only")))
	if r, f := eval[int](t, b, shownRows), eval[int](t, b, shownFigs); r != flagged || f != flagged {
		t.Errorf("flagged filter shows %d rows and %d figures, want the %d flagged", r, f, flagged)
	}
	b.do(t, "unfilter", chromedp.Click(chromedp.CSS("#flagged-only")))
	if r, f := eval[int](t, b, shownRows), eval[int](t, b, shownFigs); r != len(names) || f != len(names) {
		t.Errorf("filter off: %d rows and %d figures shown, want %d", r, f, len(names))
	}

	checkFigures(t, b, len(names))
	dir = artifactDir(t)
	for name, data := range map[string][]byte{
		"review-report.png":        shot(t, b, chromedp.FullScreenshot(100)), // quality 100: PNG
		"review-report-figure.png": shot(t, b, chromedp.Screenshot(chromedp.CSS("figure.flagged"))),
	} {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("screenshot: %s", p)
	}
	if errs := b.consoleErrors(); len(errs) > 0 {
		t.Errorf("the page reported errors:\n%s", strings.Join(errs, "\n"))
	}

	// verify --report: one row per check standard, each with its figure,
	// and the verdicts; in the same browser.
	_, refs, checks := valCase(t, 1)
	page = filepath.Join(filepath.Dir(refs), "verify.html")
	_, errOut, code = run(t, "verify", refs, checks, "--report", page)
	if code != exitOK && code != exitFlagged {
		t.Fatalf("verify: exit %d\n%s", code, errOut)
	}
	b.do(t, "load verify's report", chromedp.Navigate("file://"+page), chromedp.WaitReady(chromedp.CSS("#verdicts-table")))
	rows = eval[int](t, b, `document.querySelectorAll("#results-table tbody tr").length`)
	if n := eval[int](t, b, `document.querySelectorAll("#verdicts-table tbody tr").length`); n != 2 {
		t.Errorf("verdicts table has %d rows, want one per compound (2)", n)
	}
	if rows == 0 {
		t.Fatal("verify's report has no check standards")
	}
	checkFigures(t, b, rows)
	b.do(t, "sort by standard", chromedp.Click(chromedp.CSS("#results-table thead th:nth-child(2)")))
	if got := eval[string](t, b, `document.querySelector("#results-table thead th:nth-child(2)").getAttribute("aria-sort")`); got != "ascending" {
		t.Errorf("verify's table: header sort state %q after a click", got)
	}
	p := filepath.Join(dir, "review-report-verify.png")
	if err := os.WriteFile(p, shot(t, b, chromedp.FullScreenshot(100)), 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("screenshot: %s", p)
	if errs := b.consoleErrors(); len(errs) > 0 {
		t.Errorf("verify's page reported errors:\n%s", strings.Join(errs, "\n"))
	}
}

// checkFigures checks that the page shows want figures and that every
// one is drawn: inline SVG with a box, images with pixels.
func checkFigures(t *testing.T, b *browser, want int) {
	t.Helper()
	sizes := eval[[]float64](t, b, `Array.from(document.querySelectorAll("svg")).map(s => { const r = s.getBoundingClientRect(); return Math.min(r.width, r.height) })`)
	imgs := eval[[]float64](t, b, `Array.from(document.images).map(i => i.complete ? i.naturalWidth : 0)`)
	if len(sizes)+len(imgs) != want {
		t.Errorf("%d svg and %d img elements, want one figure per row (%d)", len(sizes), len(imgs), want)
	}
	for i, s := range append(sizes, imgs...) {
		if !(s > 50) {
			t.Errorf("image %d is not drawn (size %g)", i, s)
		}
	}
}

// sortedNumbers reports whether vals (numbers as text) are in order,
// ascending or descending.
func sortedNumbers(t *testing.T, vals []string, asc bool) bool {
	t.Helper()
	prev := math.NaN()
	for _, v := range vals {
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			t.Fatalf("sort key %q is not a number", v)
		}
		if !math.IsNaN(prev) && ((asc && x < prev) || (!asc && x > prev)) {
			return false
		}
		prev = x
	}
	return len(vals) > 1
}
