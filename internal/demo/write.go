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
	"huesolve/spectrum"
)

// Names of the files the scenario writes, relative to its folder.
const (
	StandardsSheet = "standards.csv"      // calibration standards sheet
	ChecksSheet    = "checks.csv"         // check standards sheet
	SampleSheet    = "samples.csv"        // per-sample dilution and path length
	RunSheet       = "run.csv"            // the day's run in order: blanks, checks, samples weighed in replicate
	TruthFile      = "invented-truth.csv" // the concentrations the scenario put in
	SamplesDir     = "samples"            // production sample scans
	BlankFile      = "blank.csv"          // blank scanned with the samples
	HistoryFile    = "qc-history.db"      // QC history: earlier check-standard runs (written by the demo command)
)

// log10e is 1/ln(10) = 0.4343: absorbance noise per unit of relative
// transmittance noise, since dA = -log10(e) dT/T.
const log10e = 0.43429448190325176

// measure returns the scan's absorbance readings on the grid as the
// scenario's instrument would report them: the true absorbance bent by
// stray light, plus photometric noise and a random offset. The random
// numbers come from a PCG seeded by the scenario seeds and the scan name,
// so a scan reads the same on every run whatever else the scenario holds.
func (sc *Scenario) measure(s *Scan) []float64 {
	h := fnv.New64a()
	h.Write([]byte(s.Name))
	rng := rand.New(rand.NewPCG(sc.seed1, sc.seed2^h.Sum64()))
	offset := sc.offsetSD * rng.NormFloat64()
	out := make([]float64, len(sc.grid))
	for i, nm := range sc.grid {
		t := math.Pow(10, -sc.trueAbsorbance(s, nm))
		a := -math.Log10((t + sc.strayLight) / (1 + sc.strayLight))
		tn := log10e * sc.noiseT * math.Pow(10, a)
		sd := math.Sqrt(sc.noiseFloor*sc.noiseFloor + tn*tn)
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
	for _, group := range [][]Scan{sc.Standards, sc.Checks, {sc.blank}, sc.Samples} {
		for i := range group {
			all = append(all, &group[i])
		}
	}
	for i := range sc.Lots {
		for j := range sc.Lots[i].Preps {
			all = append(all, &sc.Lots[i].Preps[j].Scan)
		}
	}
	for _, s := range all {
		var buf bytes.Buffer
		var err error
		switch s.form {
		case formWide:
			if _, ok := wide[s.file]; !ok {
				wideOrder = append(wideOrder, s.file)
			}
			wide[s.file] = append(wide[s.file], s)
			continue
		case twoColumn:
			err = spectrum.WriteDelimited(&buf, []*spectrum.Spectrum{sc.spectrum(s, spectrum.Absorbance)},
				spectrum.WriteOptions{Comments: []string{sc.comment("scan " + s.Name)}})
		case percentT:
			err = spectrum.WriteDelimited(&buf, []*spectrum.Spectrum{sc.spectrum(s, spectrum.PercentT)},
				spectrum.WriteOptions{Comments: []string{sc.comment("scan " + s.Name + ", percent transmittance")}})
		case jcamp:
			err = spectrum.WriteJCAMP(&buf, sc.spectrum(s, spectrum.Absorbance),
				spectrum.JCAMPOptions{Compressed: true, Origin: sc.Lab + " (invented demo data)", Owner: "public domain"})
		}
		if err == nil {
			err = put(s.file, buf.Bytes())
		}
		if err != nil {
			return written, fmt.Errorf("demo: %s: %w", s.file, err)
		}
	}
	for _, f := range wideOrder {
		var ss []*spectrum.Spectrum
		for _, s := range wide[f] {
			ss = append(ss, sc.spectrum(s, spectrum.Absorbance))
		}
		var buf bytes.Buffer
		err := spectrum.WriteDelimited(&buf, ss, spectrum.WriteOptions{
			Comments: []string{sc.comment("absorbance scans, one per column")}})
		if err == nil {
			err = put(f, buf.Bytes())
		}
		if err != nil {
			return written, fmt.Errorf("demo: %s: %w", f, err)
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
		fmt.Fprintf(&b, "%s,%s,%s\n", s.Name, num(s.Dilution), num(s.pathCM))
	}
	if err := put(SampleSheet, b.Bytes()); err != nil {
		return written, err
	}
	if err := put(RunSheet, sc.runSheet()); err != nil {
		return written, err
	}
	if err := put(TruthFile, sc.truth()); err != nil {
		return written, err
	}
	return written, nil
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func (sc *Scenario) header() string {
	var b bytes.Buffer
	for _, d := range sc.Dyes {
		fmt.Fprintf(&b, ",%s (%s)", d.Name, concUnit)
	}
	return b.String()
}

// comment is the first line of every scan and standards sheet.
func (sc *Scenario) comment(what string) string {
	return sc.Lab + " (invented demo data): " + what
}

// Reading precision of the invented instrument: absorbance to 1e-5,
// percent transmittance to 1e-4, as decimal places. Values are rounded as
// math.Round(v·10^d)/10^d, which gives the double nearest the decimal.
const (
	absDigits  = 1e5
	pctTDigits = 1e4
)

// spectrum returns the scan as measured, rounded to the instrument's
// reading precision, in quantity q (Absorbance or PercentT).
func (sc *Scenario) spectrum(s *Scan, q spectrum.Quantity) *spectrum.Spectrum {
	v := sc.measure(s)
	scale := absDigits
	if q == spectrum.PercentT {
		scale = pctTDigits
		for i := range v {
			v[i] = 100 * math.Pow(10, -v[i])
		}
	}
	for i := range v {
		v[i] = math.Round(v[i]*scale) / scale
	}
	name := s.Name
	if s.column != "" {
		name = s.column
	}
	return &spectrum.Spectrum{Name: name, Wavelengths: sc.grid, Values: v, Quantity: q,
		Source: spectrum.Source{File: s.file}}
}

func (sc *Scenario) sheet(what string, scans []Scan, withColumn bool) []byte {
	var b bytes.Buffer
	b.WriteString("# " + sc.comment(what) + "\n")
	b.WriteString("scan")
	if withColumn {
		b.WriteString(",column")
	}
	b.WriteString(sc.header() + "\n")
	for _, s := range scans {
		b.WriteString(s.file)
		if withColumn {
			b.WriteString("," + s.column)
		}
		for _, c := range s.Conc {
			b.WriteString("," + num(c))
		}
		b.WriteString("\n")
	}
	return b.Bytes()
}

// runSheet is the run sheet of the day's run (see huesolve sequence): a
// blank, then check standards bracketing the replicate preparations of
// each lot (sample name, lot as the group, mass and volume with their
// uncertainties), with clock times 4 minutes apart, and a blank at the
// end (the one of the check run).
func (sc *Scenario) runSheet() []byte {
	var b bytes.Buffer
	b.WriteString("# " + sc.comment("the day's run in measuring order; samples weighed and made up to volume") + "\n")
	b.WriteString("order,role,time,scan,column" + sc.header() + ",sample,group,mass,mass_unit,u_mass,volume,volume_unit,u_volume\n")
	checks := map[string]Scan{}
	for _, s := range sc.Checks {
		checks[s.Name] = s
	}
	order := 0
	row := func(role string, s Scan, conc bool, lab string) {
		order++
		mins := 4 * (order - 1)
		fmt.Fprintf(&b, "%d,%s,%02d:%02d,%s,%s", order, role, 9+mins/60, mins%60, s.file, s.column)
		for _, c := range s.Conc {
			if conc {
				b.WriteString("," + num(c))
			} else {
				b.WriteString(",")
			}
		}
		b.WriteString("," + lab + "\n")
	}
	const noLab = ",,,,,,,"
	row("blank", sc.blank, false, noLab)
	for i, l := range sc.Lots {
		row("check", checks["chk-"+strconv.Itoa(i+1)+"a"], true, noLab)
		for _, p := range l.Preps {
			row("sample", p.Scan, false, fmt.Sprintf("%s,%s,%s,g,%s,%s,mL,%s", p.Name, l.Name, num(p.MassG), num(p.UMassG), num(p.VolumeML), num(p.UVolumeML)))
		}
	}
	row("check", checks["chk-"+strconv.Itoa(len(sc.Lots)+1)+"a"], true, noLab)
	row("blank", checks["blank"], false, noLab)
	return b.Bytes()
}

func (sc *Scenario) truth() []byte {
	var b bytes.Buffer
	b.WriteString("sample" + sc.header() + fmt.Sprintf(",%s (%s),turbidity_400nm,trouble,note\n", sc.extra.Name, concUnit))
	for _, s := range sc.Samples {
		b.WriteString(s.Name)
		for _, c := range s.Conc {
			b.WriteString("," + num(c))
		}
		fmt.Fprintf(&b, ",%s,%s,%s,%q\n", num(s.unlisted), num(s.turbidity), s.Trouble, s.Note)
	}
	// The day's run: each preparation's extract, and the lot's content.
	for _, l := range sc.Lots {
		for _, p := range l.Preps {
			b.WriteString(p.Name)
			for _, c := range p.Conc {
				b.WriteString("," + num(math.Round(c*1e4)/1e4))
			}
			note := fmt.Sprintf("%s; %s g in %s mL; lot content", l.Note, num(p.MassG), num(p.VolumeML))
			for k, d := range sc.Dyes {
				if l.Content[k] != 0 {
					note += fmt.Sprintf(" %s %s mg/kg", d.Name, num(l.Content[k]))
				}
			}
			if p.Loss != 0 {
				note += fmt.Sprintf("; this preparation lost %s %%", num(100*p.Loss))
			}
			fmt.Fprintf(&b, ",0,0,,%q\n", note)
		}
	}
	return b.Bytes()
}
