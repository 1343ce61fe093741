package main

import (
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// folderFiles is the number of two-column files of BenchmarkFolder.
const folderFiles = 20000

// folderInput writes refs.json and a folder of folderFiles invented
// two-column scans (401 points each, about 10 KB) into a temporary folder
// removed when b ends.
func folderInput(b *testing.B) (ref, folder string) {
	b.Helper()
	dir := b.TempDir()
	g := benchGrid()
	ref = filepath.Join(dir, "refs.json")
	if err := benchRefs(ref, g); err != nil {
		b.Fatal(err)
	}
	folder = filepath.Join(dir, "scans")
	if err := os.Mkdir(folder, 0o755); err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(2, 2))
	buf := make([]byte, 0, 16<<10)
	for j := range folderFiles {
		var conc [4]float64
		for k := range conc {
			conc[k] = 10 * rng.Float64()
		}
		buf = append(buf[:0], "# invented scan for a huesolve benchmark\nwavelength (nm),absorbance\n"...)
		for _, l := range g {
			a := 0.01 + 0.002*rng.NormFloat64()
			for k, c := range conc {
				a += c * benchEps(k, l)
			}
			buf = strconv.AppendFloat(buf, l, 'f', -1, 64)
			buf = strconv.AppendFloat(append(buf, ','), a, 'f', 5, 64)
			buf = append(buf, '\n')
		}
		name := filepath.Join(folder, "scan-"+strconv.Itoa(100000 + j + 1)[1:]+".csv")
		if err := os.WriteFile(name, buf, 0o644); err != nil {
			b.Fatal(err)
		}
	}
	return ref, folder
}

// BenchmarkFolder runs solve in-process on a folder of 20,000 two-column
// files: "check" with --check-only, "solve" writing CSV to a file (the
// run's record with every input's SHA-256 at its head). Metrics: seconds
// per run and the peak live heap in MB. For profiles:
//
//	go test ./cmd/huesolve -run '^$' -bench Folder/solve -benchtime 5x -cpuprofile cpu.out
func BenchmarkFolder(b *testing.B) {
	if testing.Short() {
		b.Skip("writes 20,000 files")
	}
	ref, folder := folderInput(b)
	out := filepath.Join(b.TempDir(), "results.csv")
	for _, mode := range []string{"check", "solve"} {
		args := []string{"solve", ref, folder, "--format", "csv", "-o", out}
		if mode == "check" {
			args = []string{"solve", ref, folder, "--check-only"}
		}
		b.Run(mode, func(b *testing.B) {
			var peak float64
			for b.Loop() {
				var errb strings.Builder
				peak = max(peak, heapPeak(func() {
					code := Execute(args, strings.NewReader(""), io.Discard, &errb)
					if code != exitOK && code != exitFlagged {
						b.Fatalf("exit %d: %s", code, errb.String())
					}
				}))
			}
			b.ReportMetric(peak, "MB-peak-heap")
			b.ReportMetric(float64(b.Elapsed().Seconds())/float64(b.N), "s/run")
		})
	}
}
