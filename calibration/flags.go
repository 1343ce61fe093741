package calibration

import (
	"math"

	"huesolve/reference"
)

// compoundFlags are the quality codes (see [reference.Flags]) of a
// compound with calibration line l; clipped tells whether standards read
// above the ceiling at its band maximum.
func compoundFlags(l reference.Linearity, clipped bool, floor float64) []reference.Flag {
	var f []reference.Flag
	if l.Curved || l.Band.TooCurved() {
		f = append(f, reference.FlagCurved)
	}
	if !math.IsNaN(l.LackOfFitP) && l.LackOfFitP < 1-reference.TestLevel {
		f = append(f, reference.FlagLackOfFit)
	}
	if l.Levels < usualLevels {
		f = append(f, reference.FlagFewLevels)
	}
	if clipped {
		f = append(f, reference.FlagAboveCeiling)
	}
	if floor > 0 && len(l.Data) > 0 {
		lowest := math.Inf(1)
		for _, p := range l.Data {
			if p.Conc > 0 {
				lowest = min(lowest, p.Conc)
			}
		}
		if l.RangeLo > lowest {
			f = append(f, reference.FlagBelowFloor)
		}
	}
	return f
}
