package report

import (
	"encoding/csv"
	"io"
)

// commentedCSV reads a result CSV as its documentation tells readers to:
// lines starting with "#" (the run's record) are skipped.
func commentedCSV(r io.Reader) *csv.Reader {
	c := csv.NewReader(r)
	c.Comment = '#'
	return c
}
