// Package demo builds the invented scenario that `huesolve demo` runs: the
// quality-control lab of Plumwick Confections, an invented maker of fruit
// drops, which checks the colourant content of its production batches with
// four invented dyes whose bands overlap.
//
// Everything here is made up: the lab, the product, the dyes, their
// spectra and the concentrations. The spectra are synthetic bands (sums of
// asymmetric Gaussians) on 350-750 nm at 1 nm steps; the scans add a
// product-base background, a little stray light, photometric noise that
// grows as 10^A and small random offsets, all drawn from a fixed-seed PCG
// so that every run writes the same files. The true concentrations stay in
// the [Scenario] so that tests can compare what huesolve recovers with
// what was put in.
package demo

import (
	"math"
	"strconv"
	"strings"
)

// concUnit is the concentration unit of every dye in the scenario.
const concUnit = "mg/L"

// Grid limits and step of every scan, in nm.
const (
	gridLoNM   = 350
	gridHiNM   = 750
	gridStepNM = 1
)

// band is one absorption band: an asymmetric Gaussian with its maximum
// Height (absorptivity, L mg⁻¹ cm⁻¹) at CentreNM, standard deviation
// WidthLoNM on the short-wavelength side and WidthHiNM on the long side.
type band struct {
	CentreNM, WidthLoNM, WidthHiNM, Height float64
}

// At returns the band's value at wavelength nm.
func (b band) At(nm float64) float64 {
	w := b.WidthHiNM
	if nm < b.CentreNM {
		w = b.WidthLoNM
	}
	z := (nm - b.CentreNM) / w
	return b.Height * math.Exp(-0.5*z*z)
}

// Dye is one invented colourant.
type Dye struct {
	Name   string // invented name, used as the compound name in sheets
	Colour string // what it looks like, for the story
	bands  []band
	// Levels are the calibration levels (mg/L) of its pure standards.
	Levels []float64
}

// absorptivity returns the dye's absorptivity (L mg⁻¹ cm⁻¹) at nm.
func (d Dye) absorptivity(nm float64) float64 {
	var a float64
	for _, b := range d.bands {
		a += b.At(nm)
	}
	return a
}

// scanForm says how a scan is written to disk.
type scanForm int

const (
	// twoColumn is a delimited file "wavelength_nm,absorbance", one scan.
	twoColumn scanForm = iota
	// formWide is one column of a wide table holding several scans.
	formWide
	// percentT is a two-column file of transmittance in percent.
	percentT
	// jcamp is a JCAMP-DX file.
	jcamp
)

// Trouble names what is wrong with a production sample, if anything.
type Trouble string

// The troubles built into the scenario.
const (
	Normal       Trouble = ""
	NearLimit    Trouble = "near-detection-limit"
	TooStrong    Trouble = "too-concentrated"
	Turbid       Trouble = "turbid"
	UnlistedDye  Trouble = "unlisted-dye"
	DilutedAgain Trouble = "diluted-rescan" // the too-strong sample, diluted and scanned again
)

// Scan is one measured solution: a standard, a check standard or a
// production sample.
type Scan struct {
	// Name is the sample or scan name: the file base name, or the column
	// name in a wide table.
	Name string
	// file is the path relative to the scenario folder.
	file string
	// column is the column name within a wide table ("" otherwise).
	column string
	form   scanForm
	// Conc holds the concentration of each dye in Scenario.Dyes order, in
	// mg/L, in the product (for samples: before any dilution).
	Conc []float64
	// unlisted is the concentration (mg/L, in the product) of the dye that
	// is missing from the references.
	unlisted float64
	// turbidity is the scattering absorbance at 400 nm (it goes as λ⁻⁴).
	turbidity float64
	// Dilution is the dilution factor applied before scanning (1: none).
	Dilution float64
	// pathCM is the cell path length in cm.
	pathCM float64
	// Trouble says what is wrong with a production sample.
	Trouble Trouble
	// Note tells the story of the sample in a few words.
	Note string
}

// Scenario is the whole invented case.
type Scenario struct {
	Lab     string
	Product string
	// Dyes are the colourants the lab calibrates, in sheet column order.
	Dyes []Dye
	// extra is a dye the references do not hold.
	extra Dye
	// grid is the wavelength grid of every scan (nm).
	grid []float64
	// Standards are the calibration standards, blanks first.
	Standards []Scan
	// blank is the blank scanned with the production samples.
	blank Scan
	// Checks are the check standards of known composition.
	Checks []Scan
	// Samples are the production samples.
	Samples []Scan
	// Lots are the product lots of the day's run (the run sheet),
	// prepared by weight in replicate.
	Lots []Lot

	// Instrument and matrix model used to make the scans.
	strayLight  float64 // stray-light fraction of the instrument
	noiseFloor  float64 // absorbance noise SD at low absorbance
	noiseT      float64 // transmittance noise SD (fraction); gives 0.434·noiseT·10^A
	offsetSD    float64 // SD of a random absorbance offset per scan
	baseUVAbs   float64 // product-base background at 350 nm above its flat part
	baseUVDecay float64 // its decay length (nm)
	baseFlat    float64 // flat background of the product base
	seed1       uint64  // PCG seeds
	seed2       uint64
}

// New returns the Plumwick Confections scenario. It is the same on every
// call.
func New() *Scenario {
	sc := &Scenario{
		Lab:     "Plumwick Confections quality-control lab",
		Product: "fruit drops",
		Dyes: []Dye{
			{Name: "Ambrelin", Colour: "yellow", Levels: []float64{2, 4, 8, 12, 16, 20},
				bands: []band{{428, 36, 27, 0.050}, {352, 22, 22, 0.018}}},
			{Name: "Corvasine", Colour: "orange", Levels: []float64{2, 4, 8, 12, 16, 20},
				bands: []band{{482, 34, 29, 0.054}, {452, 18, 18, 0.010}, {365, 20, 20, 0.010}}},
			{Name: "Scarlane", Colour: "red", Levels: []float64{2, 4, 8, 12, 16, 20},
				bands: []band{{512, 31, 25, 0.046}, {478, 17, 17, 0.009}, {372, 20, 20, 0.008}}},
			{Name: "Tidelin", Colour: "blue", Levels: []float64{0.5, 1, 2, 3, 4, 5},
				bands: []band{{630, 30, 19, 0.160}, {585, 22, 22, 0.038}, {410, 25, 25, 0.012}}},
		},
		extra: Dye{Name: "Sloevine", Colour: "violet",
			bands: []band{{566, 30, 24, 0.080}, {385, 20, 20, 0.010}}},
		strayLight:  2e-4,
		noiseFloor:  0.0012,
		noiseT:      5e-5,
		offsetSD:    0.0008,
		baseUVAbs:   0.035,
		baseUVDecay: 28,
		baseFlat:    0.004,
		seed1:       20261202,
		seed2:       7,
	}
	for nm := gridLoNM; nm <= gridHiNM; nm += gridStepNM {
		sc.grid = append(sc.grid, float64(nm))
	}
	nd := len(sc.Dyes)
	conc := func(vals ...float64) []float64 {
		c := make([]float64, nd)
		copy(c, vals)
		return c
	}

	// Calibration standards: two blanks of the uncoloured product base,
	// each dye alone at six levels in duplicate, and two mixed standards.
	for i := 1; i <= 2; i++ {
		sc.Standards = append(sc.Standards, Scan{
			Name: "blank-" + strconv.Itoa(i), file: "standards/blank-" + strconv.Itoa(i) + ".csv",
			Conc: conc(), Dilution: 1, pathCM: 1, Note: "uncoloured product base"})
	}
	for k, d := range sc.Dyes {
		for _, lv := range d.Levels {
			for _, rep := range []string{"a", "b"} {
				name := strings.ToLower(d.Name) + "-" + levelTag(lv) + rep
				c := conc()
				c[k] = lv
				sc.Standards = append(sc.Standards, Scan{
					Name: name, file: "standards/" + name + ".csv",
					Conc: c, Dilution: 1, pathCM: 1})
			}
		}
	}
	sc.Standards = append(sc.Standards,
		Scan{Name: "mix-1", file: "standards/mix-1.csv", Conc: conc(8, 0, 0, 2), Dilution: 1, pathCM: 1,
			Note: "mixed standard"},
		Scan{Name: "mix-2", file: "standards/mix-2.csv", Conc: conc(0, 6, 6, 0), Dilution: 1, pathCM: 1,
			Note: "mixed standard"},
	)

	// Check standards: independently prepared mixtures, in one wide table
	// that starts with a blank scanned in the same run.
	sc.Checks = append(sc.Checks, Scan{Name: "blank", file: "checks/check-run.csv", column: "blank",
		form: formWide, Conc: conc(), Dilution: 1, pathCM: 1, Note: "uncoloured product base"})
	for i, c := range [][]float64{
		conc(10, 5, 5, 1.5), conc(10, 5, 5, 1.5),
		conc(4, 12, 3, 0), conc(4, 12, 3, 0),
		conc(0, 3, 14, 3), conc(0, 3, 14, 3),
	} {
		name := "chk-" + strconv.Itoa(i/2+1) + string(rune('a'+i%2))
		sc.Checks = append(sc.Checks, Scan{Name: name, file: "checks/check-run.csv", column: name,
			form: formWide, Conc: c, Dilution: 1, pathCM: 1})
	}

	// Production samples, with a blank of the product base scanned in
	// the same run.
	sc.blank = Scan{Name: "blank", file: BlankFile, Conc: conc(), Dilution: 1, pathCM: 1,
		Note: "uncoloured product base, scanned with the samples"}
	s := func(name string, form scanForm, c []float64, trouble Trouble, note string) Scan {
		file := "samples/" + name + ".csv"
		switch form {
		case formWide:
			file = "samples/run-2.csv"
		case percentT:
			file = "samples/" + name + "-pct-t.csv"
		case jcamp:
			file = "samples/" + name + ".jdx"
		}
		col := ""
		if form == formWide {
			col = name
		}
		return Scan{Name: name, file: file, column: col, form: form, Conc: c, Dilution: 1, pathCM: 1,
			Trouble: trouble, Note: note}
	}
	lime := s("lot-104", twoColumn, conc(18, 0, 0, 3.6), Normal, "lime; diluted 1+1 before scanning")
	lime.Dilution = 2
	turbid := s("lot-107", twoColumn, conc(6.5, 2, 0, 0), Turbid, "cloudy apple; hazy solution")
	turbid.turbidity = 0.05
	grape := s("lot-108", twoColumn, conc(0, 0, 6, 1.2), UnlistedDye, "grape; holds a dye not in the references")
	grape.unlisted = 5
	strong := conc(0, 20, 58, 6)
	rescan := s("lot-106-d5", twoColumn, strong, DilutedAgain, "blackcurrant, diluted 1+4 and scanned again")
	rescan.Dilution = 5
	sc.Samples = []Scan{
		s("lot-101", twoColumn, conc(11.5, 0, 0, 0), Normal, "lemon"),
		s("lot-102", twoColumn, conc(4.2, 9.6, 1.5, 0), Normal, "orange"),
		s("lot-103", twoColumn, conc(0, 2.4, 13.8, 0), Normal, "cherry"),
		lime,
		s("lot-105", twoColumn, conc(0.06, 0, 0, 0), NearLimit, "mint (uncoloured); traces carried over on the line"),
		s("lot-106", twoColumn, strong, TooStrong, "blackcurrant; too dark to read undiluted"),
		rescan,
		turbid,
		grape,
		s("lot-109", formWide, conc(7, 0, 0, 1.1), Normal, "greengage"),
		s("lot-110", formWide, conc(0, 6.5, 7.5, 0), Normal, "blood orange"),
		s("lot-111", formWide, conc(15, 3, 0, 0), Normal, "pineapple"),
		s("lot-112", jcamp, conc(0, 0, 10, 0.6), Normal, "raspberry"),
		s("lot-113", percentT, conc(5, 5, 5, 1), Normal, "mixed fruit"),
	}
	sc.Lots = sc.lots()
	return sc
}

// trueAbsorbance returns the noise-free absorbance of scan at grid point
// nm, before the instrument's stray light: dyes, the unlisted dye and
// turbidity scaled by path length and dilution, plus the product-base
// background.
func (sc *Scenario) trueAbsorbance(s *Scan, nm float64) float64 {
	dil := s.Dilution
	if dil == 0 {
		dil = 1
	}
	var a float64
	for k, d := range sc.Dyes {
		if s.Conc[k] != 0 {
			a += d.absorptivity(nm) * s.Conc[k]
		}
	}
	a += sc.extra.absorptivity(nm) * s.unlisted
	a = a * s.pathCM / dil
	if s.turbidity != 0 {
		r := 400 / nm
		a += s.turbidity * r * r * r * r
	}
	return a + sc.background(nm)*s.pathCM
}

// background is the absorbance of the uncoloured product base per cm.
func (sc *Scenario) background(nm float64) float64 {
	return sc.baseFlat + sc.baseUVAbs*math.Exp(-(nm-gridLoNM)/sc.baseUVDecay)
}

// Sample returns the production sample called name, or nil.
func (sc *Scenario) Sample(name string) *Scan {
	for i := range sc.Samples {
		if sc.Samples[i].Name == name {
			return &sc.Samples[i]
		}
	}
	return nil
}

// levelTag writes a level as a file-name part: 2 -> "02", 0.5 -> "0p5".
func levelTag(v float64) string {
	t := strings.ReplaceAll(strconv.FormatFloat(v, 'f', -1, 64), ".", "p")
	if v < 10 && v == math.Trunc(v) {
		t = "0" + t
	}
	return t
}
