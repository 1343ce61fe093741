package main

import (
	"os"
	"path/filepath"
	"runtime"
	"sync"

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
	k := firstSame(oi, inputs)
	if k < 0 {
		return nil
	}
	in := inputs[k]
	if filepath.Clean(in) == filepath.Clean(out) {
		return usagef("%s %s would overwrite the input file %s: write the output to another file", flag, out, in)
	}
	return usagef("%s %s is the input file %s: write the output to another file", flag, out, in)
}

// firstSame returns the index of the first of inputs that is the file oi
// (os.SameFile), or -1; inputs that cannot be stat'ed, "" and "-" are
// skipped. Many inputs (a folder of scans) are stat'ed in blocks on all
// cores, since the command waits for the answer before it reads a file.
func firstSame(oi os.FileInfo, inputs []string) int {
	scan := func(lo, hi int) int {
		for i := lo; i < hi; i++ {
			in := inputs[i]
			if in == "" || in == "-" {
				continue
			}
			if ii, err := os.Stat(in); err == nil && os.SameFile(oi, ii) {
				return i
			}
		}
		return -1
	}
	workers := min(runtime.GOMAXPROCS(0), len(inputs)/sameFileBlock)
	if workers <= 1 {
		return scan(0, len(inputs))
	}
	found := make([]int, workers)
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			found[w] = scan(w*len(inputs)/workers, (w+1)*len(inputs)/workers)
		})
	}
	wg.Wait()
	for _, k := range found {
		if k >= 0 {
			return k
		}
	}
	return -1
}

// sameFileBlock is the fewest inputs worth a goroutine of firstSame.
const sameFileBlock = 256

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
