package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"
	"strings"
	"testing"

	"huesolve/provenance"
)

// commentedCSV reads a result CSV as its documentation tells readers to:
// lines starting with "#" (the run's record) are skipped.
func commentedCSV(r io.Reader) *csv.Reader {
	c := csv.NewReader(r)
	c.Comment = '#'
	return c
}

// TestRunInResultFiles: with a run's record in the layout, the CSV file
// opens with its fields as "# key: value" lines (which a CSV reader told
// to skip comments skips), the JSON document holds it as "run", and a
// sample name starting with "#" is quoted so that no data row reads as a
// comment.
func TestRunInResultFiles(t *testing.T) {
	run := &provenance.Run{Tool: "huesolve", Version: "test", Time: "2026-01-01T00:00:00Z",
		Command: []string{"huesolve", "solve", "refs.json", "s.csv"}, Reference: &provenance.File{Path: "refs.json", Checksum: "ab"},
		Settings: provenance.Settings{{Name: "window", Value: "400-700"}}, Inputs: []provenance.File{{Path: "s.csv", SHA256: "cd"}}}
	l := testLayout
	l.Run = run
	r := testResult("#7")
	var b bytes.Buffer
	w := NewCSVWriter(&b, l)
	if err := w.Write(r); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	want := "# format: huesolve-results\n# schema: 3\n# tool: huesolve\n# version: test\n# time: 2026-01-01T00:00:00Z\n" +
		"# command: huesolve solve refs.json s.csv\n# reference_set: refs.json\n# reference_set_checksum: ab\n# window: 400-700\n# input: cd  s.csv\nsample,"
	if !strings.HasPrefix(b.String(), want) {
		t.Errorf("CSV opens\n%s\nwant\n%s", b.String()[:min(len(b.String()), len(want)+10)], want)
	}
	recs, err := commentedCSV(bytes.NewReader(b.Bytes())).ReadAll()
	if err != nil || len(recs) != 2 || recs[1][0] != "#7" {
		t.Errorf("read back: %v, %d records", err, len(recs))
	}
	b.Reset()
	jw, err := NewResultWriter(FormatJSON, &b, l, 0)
	if err != nil {
		t.Fatal(err)
	}
	if err := jw.Write(r); err != nil {
		t.Fatal(err)
	}
	if err := jw.Close(); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Format string
		Schema int
		Run    provenance.Run
	}
	if err := json.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatalf("%v\n%s", err, b.String())
	}
	if doc.Format != FormatNameResults || doc.Schema != Schema || doc.Run.Reference.Checksum != "ab" || doc.Run.Inputs[0].SHA256 != "cd" {
		t.Errorf("JSON: %+v", doc)
	}
}

// A run whose inputs are kept in a provenance.InputList gives the same
// JSON document as one holding them all in Inputs.
func TestRunJSONWithInputList(t *testing.T) {
	var sum [32]byte
	sum[0] = 0xcd
	list := &provenance.InputList{}
	list.Add("t.csv", &sum, "")
	list.Add("u.csv", nil, "could not be read")
	base := provenance.Run{Tool: "huesolve", Version: "test", Time: "2026-01-01T00:00:00Z",
		Command: []string{"huesolve", "solve", "refs.json", "scans"}, Settings: provenance.Settings{{Name: "window", Value: "400-700"}},
		Inputs: []provenance.File{{Path: "s.csv", SHA256: "cd"}}}
	compact, whole := base, base
	compact.InputList = list
	whole.Inputs = []provenance.File{{Path: "s.csv", SHA256: "cd"},
		{Path: "t.csv", SHA256: "cd" + strings.Repeat("00", 31)}, {Path: "u.csv", Note: "could not be read"}}
	doc := func(run *provenance.Run) string {
		l := testLayout
		l.Run = run
		var b bytes.Buffer
		jw, err := NewResultWriter(FormatJSON, &b, l, 0)
		if err != nil {
			t.Fatal(err)
		}
		if err := jw.Write(testResult("s")); err != nil {
			t.Fatal(err)
		}
		if err := jw.Close(); err != nil {
			t.Fatal(err)
		}
		return b.String()
	}
	if got, want := doc(&compact), doc(&whole); got != want {
		t.Errorf("with an InputList:\n%s\nwant\n%s", got, want)
	}
	if compact.Inputs[0].Path != "s.csv" || len(compact.Inputs) != 1 || compact.InputList != list {
		t.Errorf("the run given was changed: %+v", compact)
	}
}
