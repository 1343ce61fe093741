package report

import (
	"bufio"
	"bytes"
	"encoding/json"
	"io"
	"strconv"

	"huesolve/provenance"
)

// Schema is the version of the result files that solve, verify and window
// write (CSV and JSON): it grows whenever a column or field is added,
// renamed or changes meaning. 2: the run's record (CSV comment lines, a
// JSON "run" object) and the "schema" field, which replaced "version".
// 3: "se" includes the calibration's part, given as "se_calibration" in
// JSON (for reference sets that record it).
const Schema = 3

// Format names of the result files, written in each file's "format".
const (
	FormatNameResults = "huesolve-results"
	FormatNameVerify  = "huesolve-verify"
	FormatNameWindow  = "huesolve-window"
)

// WriteRunComments writes the lines that open a CSV result file: "#
// format: NAME", "# schema: N" and, when run is not nil, one "# key:
// value" line per field of run (provenance.Run.Fields). Readers skip
// lines that start with "#" (encoding/csv's Comment, R's comment.char,
// pandas' comment); no data row starts with "#" (a text cell that would
// is quoted).
func WriteRunComments(w io.Writer, format string, run *provenance.Run) error {
	bw := bufio.NewWriter(w)
	line := func(k, v string) {
		bw.WriteString("# ")
		bw.WriteString(k)
		bw.WriteString(": ")
		bw.WriteString(v)
		bw.WriteByte('\n')
	}
	line("format", format)
	line("schema", strconv.Itoa(Schema))
	if run != nil {
		run.EachField(func(f provenance.Field) { line(f.Key, f.Value) })
	}
	return bw.Flush()
}

// appendRunJSON appends run as an indented JSON object, its lines
// indented by one space (the level of the results document's fields).
func appendRunJSON(b []byte, run *provenance.Run) ([]byte, error) {
	if run != nil && run.InputList.Len() > 0 {
		all := *run
		all.Inputs, all.InputList = run.AllInputs(), nil
		run = &all
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent(" ", "  ")
	if err := enc.Encode(run); err != nil {
		return b, err
	}
	return append(b, bytes.TrimRight(buf.Bytes(), "\n")...), nil
}
