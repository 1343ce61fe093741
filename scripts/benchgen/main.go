// Command benchgen writes the invented input of scripts/bench.sh: the
// standards of four made-up dyes (for huesolve calibrate), a wide table of
// many sample scans, and a folder of two-column scan files. All spectra
// are synthetic Gaussian bands with noise, the same on every run.
//
//	go run ./scripts/benchgen -dir DIR [-standards] [-wide N] [-files N]
//
// DIR/standards/ holds standards.csv and its scans; DIR/wide.csv holds N
// scans as columns (401 wavelengths, 350-750 nm, as rows); DIR/files-N/
// holds N files of one scan each.
package main

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
)

// The invented dyes: band centre and width in nm, absorptivity at the
// centre per mg/L per cm.
var dyes = []struct {
	name                  string
	centre, width, height float64
}{
	{"ambrite", 420, 32, 0.050},
	{"rubrine", 500, 30, 0.045},
	{"violane", 570, 35, 0.055},
	{"cyanole", 640, 30, 0.060},
}

const (
	gridLo, gridHi = 350, 750 // nm, 1 nm steps: 401 wavelengths
	offset         = 0.01     // solvent and cell absorbance
	noiseSD        = 0.002    // reading noise, absorbance
	maxConc        = 10.0     // mg/L, highest sample concentration
)

func grid() []float64 {
	var g []float64
	for l := gridLo; l <= gridHi; l++ {
		g = append(g, float64(l))
	}
	return g
}

func absorptivity(k int, l float64) float64 {
	d := (l - dyes[k].centre) / dyes[k].width
	return dyes[k].height * math.Exp(-0.5*d*d)
}

// scan returns the absorbance of a mixture on g, rounded to 5 decimals as
// an instrument writes it.
func scan(g []float64, conc []float64, rng *rand.Rand) []float64 {
	v := make([]float64, len(g))
	for i, l := range g {
		a := offset + noiseSD*rng.NormFloat64()
		for k, c := range conc {
			a += c * absorptivity(k, l)
		}
		v[i] = math.Round(a*1e5) / 1e5
	}
	return v
}

// writeTwoColumn writes one scan as "wavelength (nm),absorbance" rows.
func writeTwoColumn(path string, g, v []float64) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	w.WriteString("# invented scan for the huesolve benchmark\nwavelength (nm),absorbance\n")
	buf := make([]byte, 0, 64)
	for i, l := range g {
		buf = strconv.AppendFloat(buf[:0], l, 'f', -1, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, v[i], 'f', 5, 64)
		buf = append(buf, '\n')
		w.Write(buf)
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// standards writes two blanks and five levels of each dye alone, in
// triplicate, and the sheet naming them.
func standards(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	g := grid()
	rng := rand.New(rand.NewPCG(1, 2))
	sheet := "# invented standards for the huesolve benchmark\nscan"
	for _, d := range dyes {
		sheet += "," + d.name + " (mg/L)"
	}
	sheet += "\n"
	row := func(file string, conc []float64) error {
		if err := writeTwoColumn(filepath.Join(dir, file), g, scan(g, conc, rng)); err != nil {
			return err
		}
		sheet += file
		for _, c := range conc {
			sheet += "," + strconv.FormatFloat(c, 'g', -1, 64)
		}
		sheet += "\n"
		return nil
	}
	for i := range 2 {
		if err := row(fmt.Sprintf("blank-%d.csv", i+1), make([]float64, len(dyes))); err != nil {
			return err
		}
	}
	for k, d := range dyes {
		for _, lv := range []float64{2, 4, 6, 8, 10} {
			for rep := range 3 {
				conc := make([]float64, len(dyes))
				conc[k] = lv
				if err := row(fmt.Sprintf("%s-%g-%c.csv", d.name, lv, 'a'+rep), conc); err != nil {
					return err
				}
			}
		}
	}
	return os.WriteFile(filepath.Join(dir, "standards.csv"), []byte(sheet), 0o644)
}

// mixture draws the concentrations of sample j.
func mixture(rng *rand.Rand) []float64 {
	c := make([]float64, len(dyes))
	for k := range c {
		c[k] = maxConc * rng.Float64()
	}
	return c
}

// wide writes n scans as the columns of one table.
func wide(path string, n int) error {
	g := grid()
	rng := rand.New(rand.NewPCG(3, 4))
	cols := make([][]float64, n)
	for j := range cols {
		cols[j] = scan(g, mixture(rng), rng)
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString("wavelength (nm)")
	for j := range n {
		fmt.Fprintf(w, ",S%06d [absorbance]", j+1)
	}
	w.WriteByte('\n')
	buf := make([]byte, 0, 32)
	for i, l := range g {
		w.WriteString(strconv.FormatFloat(l, 'f', -1, 64))
		for j := range n {
			buf = strconv.AppendFloat(append(buf[:0], ','), cols[j][i], 'f', 5, 64)
			w.Write(buf)
		}
		w.WriteByte('\n')
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// files writes n files of one scan each into dir.
func files(dir string, n int) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	g := grid()
	rng := rand.New(rand.NewPCG(5, 6))
	for j := range n {
		if err := writeTwoColumn(filepath.Join(dir, fmt.Sprintf("scan-%06d.csv", j+1)), g, scan(g, mixture(rng), rng)); err != nil {
			return err
		}
	}
	return nil
}

func main() {
	dir := flag.String("dir", "bench-out", "folder to write into")
	std := flag.Bool("standards", false, "write the standards and their sheet into DIR/standards")
	nWide := flag.Int("wide", 0, "write a wide table of this many scans to DIR/wide.csv")
	nFiles := flag.Int("files", 0, "write this many one-scan files into DIR/files-N")
	flag.Parse()
	if err := run(*dir, *std, *nWide, *nFiles); err != nil {
		fmt.Fprintln(os.Stderr, "benchgen:", err)
		os.Exit(1)
	}
}

func run(dir string, std bool, nWide, nFiles int) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if std {
		if err := standards(filepath.Join(dir, "standards")); err != nil {
			return err
		}
	}
	if nWide > 0 {
		if err := wide(filepath.Join(dir, "wide.csv"), nWide); err != nil {
			return err
		}
	}
	if nFiles > 0 {
		if err := files(filepath.Join(dir, fmt.Sprintf("files-%d", nFiles)), nFiles); err != nil {
			return err
		}
	}
	return nil
}
