package report

import (
	"bytes"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"huesolve/history"
)

// historyCharts is an invented history: 20 baseline runs alternating 101
// and 99 % recovery, then a point at 105 % (beyond 3 SD) for one check
// standard, and a second standard with only one point (no limits).
func historyCharts() []history.Chart {
	s := history.Series{Compound: "Ambrelin", Standard: "QC-1"}
	t0 := time.Date(2026, 3, 1, 9, 0, 0, 0, time.UTC)
	for i := 0; i < 21; i++ {
		x := 101.0
		if i%2 == 1 {
			x = 99
		}
		if i == 20 {
			x = 105
		}
		s.Points = append(s.Points, history.Point{RunID: int64(i + 1), Time: t0.Add(time.Duration(i) * 24 * time.Hour), Recovery: x})
	}
	one := history.Series{Compound: "Corvane", Standard: "QC-1", Points: []history.Point{{RunID: 1, Time: t0, Recovery: 98}}}
	return history.Evaluate([]history.Series{s, one}, history.DefaultBaseline)
}

func TestControlChartSVG(t *testing.T) {
	dir := t.TempDir()
	files, err := WriteControlCharts(historyCharts(), dir, "svg")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 2 || filepath.Base(files[0]) != "control-Ambrelin-QC-1.svg" {
		t.Fatalf("files %v", files)
	}
	for _, f := range files {
		if fi, err := os.Stat(f); err != nil || fi.Size() == 0 {
			t.Fatalf("%s: %v", f, err)
		}
		doc := readSVG(t, f)
		for _, want := range []string{"recovery (%)", "point (runs in order)"} {
			if doc.count(want) != 1 {
				t.Errorf("%s: axis label %q appears %d times, want once", f, want, doc.count(want))
			}
		}
	}
	doc := readSVG(t, files[0])
	if doc.count("Ambrelin in QC-1") != 1 || !doc.hasPrefix("centre 100.00 %, SD 1.03 % (first 20 points)") {
		t.Errorf("title or legend missing: %q", doc.texts)
	}
	// The one point that broke a rule is marked, filled in the
	// rejection colour; the ±3 SD limits are its two lines.
	if n := doc.paths("fill:" + hex(colour(5))); n != 1 {
		t.Errorf("%d marks in the rejection colour, want 1", n)
	}
	if n := doc.paths("fill:none;stroke:" + hex(colour(5))); n != 2 {
		t.Errorf("%d lines in the ±3 SD colour, want 2", n)
	}
	png, err := WriteControlCharts(historyCharts()[:1], dir, "png")
	if err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(png[0]); err != nil || !bytes.HasPrefix(b, []byte("\x89PNG")) {
		t.Errorf("%s is not a PNG: %v", png[0], err)
	}
}

func TestHistoryTableAndCSV(t *testing.T) {
	charts := historyCharts()
	pass := true
	h := &HistoryReport{File: "qc.db", Baseline: 20, Charts: charts,
		Runs: []history.Run{{ID: 1, Kind: history.KindVerify, Time: time.Date(2026, 3, 1, 9, 0, 0, 0, time.UTC), Reference: "dyes.json", Pass: &pass, NChecks: 2}}}
	var b bytes.Buffer
	if err := WriteHistoryTable(&b, h); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{
		"QC history qc.db: 1 run(s)",
		"1-2s ×1 (warning), 1-3s ×1",
		"no limits (fewer than 2 points or no spread)",
		"1 (provisional)",
		// 105 % is (105 - 100) / sqrt(20/19) = 4.87 SD above the centre.
		"run 21 (2026-03-21 09:00) Ambrelin in QC-1: 1-3s, out of control (recovery 105.00 %, 4.87 s)",
		"run 21 (2026-03-21 09:00) Ambrelin in QC-1: 1-2s, warning",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	b.Reset()
	if err := WriteHistoryCSV(&b, charts); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 1+21+1 {
		t.Fatalf("%d CSV records, want 23", len(recs))
	}
	last := recs[21]
	if last[2] != "21" || last[4] != "105" || last[9] != "1-2s 1-3s" || last[8] != "20" {
		t.Errorf("last Ambrelin row %q", last)
	}
	if z := (105 - 100) / math.Sqrt(20.0/19.0); !strings.HasPrefix(last[5], "4.87") || z < 4.87 || z > 4.88 {
		t.Errorf("z %s, want %.4f", last[5], z)
	}
	if recs[22][5] != "" || recs[22][7] != "" {
		t.Errorf("a point without limits shows z %q and SD %q; want empty", recs[22][5], recs[22][7])
	}
}
