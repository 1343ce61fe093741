package main

import (
	"encoding/csv"
	"io"
	"regexp"
	"strings"
)

// commentedCSV reads a result CSV as its documentation tells readers to:
// lines starting with "#" (the run's record) are skipped.
func commentedCSV(r io.Reader) *csv.Reader {
	c := csv.NewReader(r)
	c.Comment = '#'
	return c
}

// dataLines is s without its "#" comment lines (the run's record).
func dataLines(s string) string {
	var b strings.Builder
	for _, l := range strings.SplitAfter(s, "\n") {
		if !strings.HasPrefix(l, "#") {
			b.WriteString(l)
		}
	}
	return b.String()
}

var (
	timeCSV     = regexp.MustCompile(`(?m)^# time: .*$`)
	timeJSON    = regexp.MustCompile(`"time": "[^"]*"`)
	commandCSV  = regexp.MustCompile(`(?m)^# command: .*$`)
	commandJSON = regexp.MustCompile(`"command": \[[^\]]*\]`)
)

// maskTime replaces the run's time in a CSV or JSON result file (the one
// field that differs between two runs of the same command) by TIME.
func maskTime(s string) string {
	s = timeCSV.ReplaceAllString(s, "# time: TIME")
	return timeJSON.ReplaceAllString(s, `"time": "TIME"`)
}

// maskCommand replaces the run's command line by COMMAND, for tests that
// compare runs of different command lines.
func maskCommand(s string) string {
	s = commandCSV.ReplaceAllString(s, "# command: COMMAND")
	return commandJSON.ReplaceAllString(s, `"command": "COMMAND"`)
}
