package demo

import (
	"math"
	"math/rand/v2"
	"strconv"
	"time"
)

// Prep is one replicate preparation of a product lot for the day's run:
// MassG grams of product made up to VolumeML millilitres, and scanned.
// Its Scan's Conc is the extract's concentration in mg/L.
type Prep struct {
	Scan
	// Lot is the product lot: the replicate group.
	Lot string
	// MassG and VolumeML are the preparation as weighed and made up;
	// UMassG and UVolumeML their standard uncertainties.
	MassG, UMassG, VolumeML, UVolumeML float64
	// Content is each dye's content of the lot in mg/kg of product, in
	// Scenario.Dyes order.
	Content []float64
	// Loss is the fraction of dye this preparation lost (0: none).
	Loss float64
}

// Lot is one product lot of the day's run, prepared by weight in
// replicate.
type Lot struct {
	Name, Note string
	// Content is each dye's content in mg/kg of product.
	Content []float64
	// Preps are the replicate preparations.
	Preps []Prep
}

// prepVolumeML, uMassG and uVolumeML are the preparation of every
// replicate: the weighed product made up to 50 mL in a volumetric flask;
// standard uncertainties of a 0.1 mg balance reading and of a 50 mL
// class A flask (±0.05 mL read as a rectangular distribution, 0.05/√3),
// invented in the spirit of common practice.
const (
	prepVolumeML = 50
	uMassG       = 0.0002
	uVolumeML    = 0.03
)

// lots are the day's run's product lots: content in mg/kg, and for each
// replicate the mass weighed and the fraction of dye it lost (a planted
// slip in lot-115's third preparation).
func (sc *Scenario) lots() []Lot {
	nd := len(sc.Dyes)
	content := func(vals ...float64) []float64 {
		c := make([]float64, nd)
		copy(c, vals)
		return c
	}
	mk := func(name, note string, c []float64, masses, losses []float64) Lot {
		l := Lot{Name: name, Note: note, Content: c}
		for i, m := range masses {
			p := Prep{Lot: name, MassG: m, UMassG: uMassG, VolumeML: prepVolumeML, UVolumeML: uVolumeML, Content: c, Loss: losses[i]}
			p.Name = name + "-" + strconv.Itoa(i+1)
			p.file = "run/" + p.Name + ".csv"
			p.Dilution, p.pathCM = 1, 1
			p.Note = note
			// c mg/kg × m g / V mL = mg/L (1 mg/kg × 1 g / 1 mL = 1 mg/L).
			p.Conc = make([]float64, nd)
			for k := range c {
				p.Conc[k] = c[k] * m / prepVolumeML * (1 - p.Loss)
			}
			l.Preps = append(l.Preps, p)
		}
		return l
	}
	return []Lot{
		mk("lot-114", "strawberry, weighed in triplicate", content(0, 40, 220, 0),
			[]float64{2.5031, 2.4968, 2.5119}, []float64{0, 0, 0}),
		mk("lot-115", "lemon-lime, weighed in triplicate; the third flask was topped up past the mark", content(180, 0, 0, 30),
			[]float64{2.4884, 2.5062, 2.4950}, []float64{0, 0, 0.09}),
	}
}

// HistoryCheck is one compound of one check standard in one earlier run.
type HistoryCheck struct {
	Standard, Compound string
	Known, Found       float64 // mg/L
	SE                 float64 // mg/L
	Recovery           float64 // per cent
}

// HistoryDay is one earlier day's check-standard run, invented.
type HistoryDay struct {
	Time   time.Time
	Checks []HistoryCheck
}

// History parameters: HistoryDays working days from HistoryStart; each
// recovery is 100 % plus noise of SD historyNoisePct (about what the
// demo's verify finds) and, for ShiftedDye from day HistoryShiftDay
// (counting from 1) on, a shift of historyShiftPct: a planted drift (a
// new bottle of solvent, say) that the control rules catch. The first
// HistoryBaseline days of each series are scaled to mean 100 % and SD
// historyNoisePct exactly, and later noise is kept within
// historyClip SDs, so that the charts' limits are the ones the story
// needs and only the planted shift breaks a rule (invented data).
const (
	HistoryDays     = 20
	HistoryBaseline = 10
	HistoryShiftDay = 13
	historyNoisePct = 0.3
	historyShiftPct = 0.45
	historyClip     = 1.5
	historySEmgL    = 0.006
)

// HistoryStart is the first day of the invented history: a Monday,
// 09:00 UTC.
var HistoryStart = time.Date(2026, time.November, 2, 9, 0, 0, 0, time.UTC)

// ShiftedDye is the dye whose recoveries the planted shift moves.
const ShiftedDye = "Scarlane"

// historyChecks are the check standards of the history: the day's run's.
var historyChecks = []string{"chk-1a", "chk-2a", "chk-3a"}

// History returns the invented earlier runs of the lab's check
// standards chk-1a, chk-2a and chk-3a (the day's run's checks), one run
// per working day: every compound a check holds, with its recovery. The
// numbers come from a PCG with fixed seeds: the same on every call.
func (sc *Scenario) History() []HistoryDay {
	rng := rand.New(rand.NewPCG(sc.seed1, sc.seed2+1))
	days := make([]HistoryDay, HistoryDays)
	day := HistoryStart
	for n := range days {
		for day.Weekday() == time.Saturday || day.Weekday() == time.Sunday {
			day = day.AddDate(0, 0, 1)
		}
		days[n].Time = day
		day = day.AddDate(0, 0, 1)
	}
	for _, name := range historyChecks {
		var c Scan
		for _, s := range sc.Checks {
			if s.Name == name {
				c = s
			}
		}
		for k, dye := range sc.Dyes {
			known := c.Conc[k]
			if known == 0 {
				continue
			}
			for n, z := range historyNoise(rng) {
				rec := 100 + historyNoisePct*z
				if dye.Name == ShiftedDye && n+1 >= HistoryShiftDay {
					rec += historyShiftPct
				}
				rec = math.Round(rec*100) / 100
				days[n].Checks = append(days[n].Checks, HistoryCheck{Standard: name, Compound: dye.Name, Known: known,
					Found: known * rec / 100, SE: historySEmgL, Recovery: rec})
			}
		}
	}
	return days
}

// historyNoise is one series' standard normal noise: the first
// HistoryBaseline values scaled to mean 0 and SD 1 exactly, the others
// kept within ±historyClip.
func historyNoise(rng *rand.Rand) []float64 {
	z := make([]float64, HistoryDays)
	for i := range z {
		z[i] = rng.NormFloat64()
	}
	b := z[:HistoryBaseline]
	var mean, ss float64
	for _, v := range b {
		mean += v / float64(len(b))
	}
	for _, v := range b {
		ss += (v - mean) * (v - mean)
	}
	sd := math.Sqrt(ss / float64(len(b)-1))
	for i := range b {
		b[i] = (b[i] - mean) / sd
	}
	for i := HistoryBaseline; i < len(z); i++ {
		z[i] = max(-historyClip, min(historyClip, z[i]))
	}
	return z
}
