package demo

import (
	"bytes"
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"

	"huesolve/internal/atomicfile"
)

// Names of the files the scenario writes, relative to its folder.
const (
	StandardsSheet = "standards.csv"      // calibration standards sheet
	ChecksSheet    = "checks.csv"         // check standards sheet
	SampleSheet    = "samples.csv"        // per-sample dilution and path length
	TruthFile      = "invented-truth.csv" // the concentrations the scenario put in
	SamplesDir     = "samples"            // production sample scans
	BlankFile      = "blank.csv"          // blank scanned with the samples
)

// log10e is 1/ln(10) = 0.4343: absorbance noise per unit of relative
// transmittance noise, since dA = -log10(e) dT/T.
const log10e = 0.43429448190325176

// Measure returns the scan's absorbance readings on the grid as the
// scenario's instrument would report them: the true absorbance bent by
// stray light, plus photometric noise and a random offset. The random
// numbers come from a PCG seeded by the scenario seeds and the scan name,
// so a scan reads the same on every run whatever else the scenario holds.
func (sc *Scenario) Measure(s *Scan) []float64 {
	h := fnv.New64a()
	h.Write([]byte(s.Name))
	rng := rand.New(rand.NewPCG(sc.Seed1, sc.Seed2^h.Sum64()))
	offset := sc.OffsetSD * rng.NormFloat64()
	out := make([]float64, len(sc.Grid))
	for i, nm := range sc.Grid {
		t := math.Pow(10, -sc.TrueAbsorbance(s, nm))
		a := -math.Log10((t + sc.StrayLight) / (1 + sc.StrayLight))
		tn := log10e * sc.NoiseT * math.Pow(10, a)
		sd := math.Sqrt(sc.NoiseFloor*sc.NoiseFloor + tn*tn)
		out[i] = a + offset + sd*rng.NormFloat64()
	}
	return out
}

// Write writes the scenario's files into dir (created if needed): the
// scans, the standards and check-standards sheets, the sample sheet and
// the invented truth. Every file is written atomically. It returns the
// paths written, relative to dir, in a fixed order.
func (sc *Scenario) Write(dir string) ([]string, error) {
	var written []string
	put := func(rel string, data []byte) error {
		p := filepath.Join(dir, filepath.FromSlash(rel))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			return fmt.Errorf("demo: %w", err)
		}
		if err := atomicfile.WriteBytes(p, data); err != nil {
			return fmt.Errorf("demo: %w", err)
		}
		written = append(written, rel)
		return nil
	}

	// Scans. Wide tables gather their columns first.
	wide := map[string][]*Scan{}
	var wideOrder []string
	all := make([]*Scan, 0, len(sc.Standards)+len(sc.Checks)+len(sc.Samples)+1)
	for _, group := range [][]Scan{sc.Standards, sc.Checks, {sc.Blank}, sc.Samples} {
		for i := range group {
			all = append(all, &group[i])
		}
	}
	for _, s := range all {
		var data []byte
		switch s.Form {
		case Wide:
			if _, ok := wide[s.File]; !ok {
				wideOrder = append(wideOrder, s.File)
			}
			wide[s.File] = append(wide[s.File], s)
			continue
		case TwoColumn:
			data = sc.twoColumn(s.Name, "absorbance", sc.Measure(s), 5)
		case PercentT:
			a := sc.Measure(s)
			for i := range a {
				a[i] = 100 * math.Pow(10, -a[i])
			}
			data = sc.twoColumn(s.Name, "%T", a, 4)
		case JCAMP:
			data = sc.jcamp(s.Name, sc.Measure(s))
		}
		if err := put(s.File, data); err != nil {
			return written, err
		}
	}
	for _, f := range wideOrder {
		if err := put(f, sc.wideTable(wide[f])); err != nil {
			return written, err
		}
	}

	// Sheets.
	if err := put(StandardsSheet, sc.sheet("calibration standards; a row of zeros is a blank", sc.Standards, false)); err != nil {
		return written, err
	}
	if err := put(ChecksSheet, sc.sheet("check standards of known composition", sc.Checks, true)); err != nil {
		return written, err
	}
	var b bytes.Buffer
	b.WriteString("sample,dilution,path_cm\n")
	for _, s := range sc.Samples {
		fmt.Fprintf(&b, "%s,%s,%s\n", s.Name, num(s.Dilution), num(s.PathCM))
	}
	if err := put(SampleSheet, b.Bytes()); err != nil {
		return written, err
	}
	if err := put(TruthFile, sc.truth()); err != nil {
		return written, err
	}
	return written, nil
}

// SampleFiles returns the distinct sample scan files (relative paths) in
// scenario order.
func (sc *Scenario) SampleFiles() []string {
	seen := map[string]bool{}
	var out []string
	for _, s := range sc.Samples {
		if !seen[s.File] {
			seen[s.File] = true
			out = append(out, s.File)
		}
	}
	return out
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func (sc *Scenario) header() string {
	var b bytes.Buffer
	for _, d := range sc.Dyes {
		fmt.Fprintf(&b, ",%s (%s)", d.Name, Unit)
	}
	return b.String()
}

// comment is the first line of every scan and standards sheet.
func (sc *Scenario) comment(what string) string {
	return "# " + sc.Lab + " (invented demo data): " + what + "\n"
}

func (sc *Scenario) twoColumn(name, quantity string, v []float64, prec int) []byte {
	var b bytes.Buffer
	b.WriteString(sc.comment("scan " + name + ", 1 nm steps"))
	b.WriteString("wavelength_nm," + quantity + "\n")
	for i, nm := range sc.Grid {
		fmt.Fprintf(&b, "%s,%.*f\n", num(nm), prec, v[i])
	}
	return b.Bytes()
}

func (sc *Scenario) wideTable(scans []*Scan) []byte {
	cols := make([][]float64, len(scans))
	var b bytes.Buffer
	b.WriteString(sc.comment("absorbance scans, one per column"))
	b.WriteString("wavelength_nm")
	for i, s := range scans {
		b.WriteString("," + s.Column + " (absorbance)")
		cols[i] = sc.Measure(s)
	}
	b.WriteString("\n")
	for i, nm := range sc.Grid {
		b.WriteString(num(nm))
		for _, c := range cols {
			fmt.Fprintf(&b, ",%.5f", c[i])
		}
		b.WriteString("\n")
	}
	return b.Bytes()
}

func (sc *Scenario) sheet(what string, scans []Scan, withColumn bool) []byte {
	var b bytes.Buffer
	b.WriteString(sc.comment(what))
	b.WriteString("scan")
	if withColumn {
		b.WriteString(",column")
	}
	b.WriteString(sc.header() + "\n")
	for _, s := range scans {
		b.WriteString(s.File)
		if withColumn {
			b.WriteString("," + s.Column)
		}
		for _, c := range s.Conc {
			b.WriteString("," + num(c))
		}
		b.WriteString("\n")
	}
	return b.Bytes()
}

func (sc *Scenario) truth() []byte {
	var b bytes.Buffer
	b.WriteString("sample" + sc.header() + fmt.Sprintf(",%s (%s),turbidity_400nm,trouble,note\n", sc.Extra.Name, Unit))
	for _, s := range sc.Samples {
		b.WriteString(s.Name)
		for _, c := range s.Conc {
			b.WriteString("," + num(c))
		}
		fmt.Fprintf(&b, ",%s,%s,%s,%q\n", num(s.Unlisted), num(s.Turbidity), s.Trouble, s.Note)
	}
	return b.Bytes()
}

// jcamp writes a JCAMP-DX 4.24 UV/VIS spectrum in AFFN form (McDonald &
// Wilks, Appl. Spectrosc. 42 (1988) 151), ten values a line.
func (sc *Scenario) jcamp(title string, a []float64) []byte {
	const yfactor = 1e-5
	var b bytes.Buffer
	first, last := sc.Grid[0], sc.Grid[len(sc.Grid)-1]
	fmt.Fprintf(&b, "##TITLE=%s\n##JCAMP-DX=4.24\n##DATA TYPE=UV/VIS SPECTRUM\n", title)
	fmt.Fprintf(&b, "##ORIGIN=%s (invented demo data)\n##OWNER=public domain\n", sc.Lab)
	fmt.Fprintf(&b, "##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=%g\n", yfactor)
	fmt.Fprintf(&b, "##FIRSTX=%s\n##LASTX=%s\n##NPOINTS=%d\n##FIRSTY=%.5f\n", num(first), num(last), len(a),
		math.Round(a[0]/yfactor)*yfactor)
	b.WriteString("##XYDATA=(X++(Y..Y))\n")
	for i := 0; i < len(a); i += 10 {
		b.WriteString(num(sc.Grid[i]))
		for j := i; j < min(i+10, len(a)); j++ {
			fmt.Fprintf(&b, " %d", int64(math.Round(a[j]/yfactor)))
		}
		b.WriteString("\n")
	}
	b.WriteString("##END=\n")
	return b.Bytes()
}
