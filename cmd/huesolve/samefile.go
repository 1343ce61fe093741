package main

import (
	"os"
	"path/filepath"

	"huesolve/batch"
	"huesolve/calibration"
)

// checkNotInput refuses, as a usage error, an output file that is not a
// regular file (checkOutput) or is one of the command's input files:
// writing it would destroy the input, and a reference set or scan lost
// that way is often the lab's only copy. flag names the option (e.g.
// "-o"); out is its value ("" and "-" are standard output and pass).
// Inputs are compared as files (os.SameFile, after symbolic links are
// followed), so "./refs.json", an absolute path and a link to it are all
// caught; inputs that do not exist (yet) are skipped, as is an output
// that does not exist.
func checkNotInput(flag, out string, inputs ...string) error {
	if toStdout(out) {
		return nil
	}
	if err := checkOutput(flag, out); err != nil {
		return err
	}
	oi, err := os.Stat(out)
	if err != nil {
		return nil
	}
	for _, in := range inputs {
		if in == "" || in == "-" {
			continue
		}
		ii, err := os.Stat(in)
		if err != nil {
			continue
		}
		if os.SameFile(oi, ii) {
			if filepath.Clean(in) == filepath.Clean(out) {
				return usagef("%s %s would overwrite the input file %s: write the output to another file", flag, out, in)
			}
			return usagef("%s %s is the input file %s: write the output to another file", flag, out, in)
		}
	}
	return nil
}

// scanInputFiles lists the files among solve's inputs (batch.ExpandInputs
// of its scan arguments: each file as given and the files of each folder
// and pattern).
func scanInputFiles(inputs []batch.Input) []string {
	var files []string
	for _, in := range inputs {
		if in.Err == nil {
			files = append(files, in.Path)
		}
	}
	return files
}

// sheetFiles lists the scan files a standards or check sheet names, as
// opened.
func sheetFiles(sh *calibration.Sheet) []string {
	var files []string
	for _, rows := range [][]calibration.Row{sh.Standards, sh.Blanks} {
		for _, r := range rows {
			files = append(files, r.Path)
		}
	}
	return files
}
