package lab

import "huesolve/reference"

// Amount is one compound's result in one scan, in the results' unit.
type Amount struct {
	Compound, Unit     string
	Conc, SE, LOD, LOQ float64
}

// Scan is one solved scan: its name, source, the sheet row it matched
// ("" for none) and its amounts.
type Scan struct {
	Sample, Source, Row string
	Amounts             []Amount
}

// Options control Evaluate.
type Options struct {
	// Basis is the reporting basis; nil reports in the results' unit.
	Basis *Basis
	// MaxRSD is a replicate group's RSD limit in per cent (0:
	// DefaultMaxRSD).
	MaxRSD float64
	// MolarMass of the compounds in g/mol by name, where known.
	MolarMass map[string]float64
}

// Reported is one compound of one scan on the reporting basis.
type Reported struct {
	Sample, Group, Compound, Unit string
	Value
	Text string // as CertText gives it
}

// Member is one scan of a replicate group.
type Member struct {
	Sample  string
	Value   float64
	Outlier bool
}

// Group is one compound's replicate statistics in one group.
type Group struct {
	Name, Compound, Unit string
	N                    int
	Mean, SD, RSD        float64 // RSD in per cent; SD and RSD NaN for n < 2
	// Reported is the mean as a certificate shows it, with the standard
	// deviation as its uncertainty (CertText, with the members' mean LOD
	// and LOQ).
	Reported string
	// G and GCrit are Grubbs' statistic and critical value (NaN for n < 3).
	G, GCrit float64
	Members  []Member
	Flags    []reference.Flag
}

// Summary is what Evaluate finds: every scan's amounts on the basis, and
// the replicate groups in sheet order, compounds in result order.
type Summary struct {
	Unit     string // the basis, or "" when results stay in their own unit
	MaxRSD   float64
	Alpha    float64
	Reported []Reported
	Groups   []Group
}

// Flagged reports the number of groups with a flag.
func (s *Summary) Flagged() int {
	n := 0
	for _, g := range s.Groups {
		if len(g.Flags) > 0 {
			n++
		}
	}
	return n
}

// Evaluate puts the scans on the basis and gathers the replicate groups
// of sh. Errors name the sample sheet's file and line: a scan that needs
// a preparation for a mass-fraction basis and has none, a unit that
// cannot be converted.
func Evaluate(scans []Scan, sh *Sheet, opt Options) (*Summary, error) {
	s := &Summary{MaxRSD: opt.MaxRSD, Alpha: GrubbsAlpha}
	if s.MaxRSD == 0 {
		s.MaxRSD = DefaultMaxRSD
	}
	if opt.Basis != nil {
		s.Unit = opt.Basis.String()
	}
	type key struct{ group, compound string }
	members := map[key][]int{} // indexes into s.Reported
	var order []key
	for _, sc := range scans {
		row, inSheet := sh.Rows[sc.Row]
		for _, a := range sc.Amounts {
			r, err := report(sc, row, inSheet, a, sh.File, opt)
			if err != nil {
				return nil, err
			}
			s.Reported = append(s.Reported, r)
			if r.Group != "" {
				k := key{r.Group, a.Compound}
				if _, seen := members[k]; !seen {
					order = append(order, k)
				}
				members[k] = append(members[k], len(s.Reported)-1)
			}
		}
	}
	for _, k := range order {
		s.Groups = append(s.Groups, s.group(k.group, k.compound, members[k]))
	}
	return s, nil
}

// report is one amount of scan sc on the basis.
func report(sc Scan, row Row, inSheet bool, a Amount, file string, opt Options) (Reported, error) {
	r := Reported{Sample: sc.Sample, Group: row.Group, Compound: a.Compound, Unit: a.Unit,
		Value: Value{a.Conc, a.SE, a.LOD, a.LOQ}}
	if opt.Basis != nil {
		if opt.Basis.Fraction && row.Prep == nil {
			if !inSheet {
				return r, errorf(file, 0, 0, "sample %q (%s) is not in the sample sheet: basis %s needs its mass and volume", sc.Sample, sc.Source, opt.Basis.Text)
			}
			return r, errorf(file, row.Line, 0, "sample %q: basis %s needs its mass, mass_unit, volume and volume_unit", row.Name, opt.Basis.Text)
		}
		v, err := opt.Basis.Convert(a.Conc, a.SE, a.LOD, a.LOQ, a.Unit, opt.MolarMass[a.Compound], row.Prep)
		if err != nil {
			return r, errorf(file, row.Line, 0, "sample %q, %s: %w", sc.Sample, a.Compound, err)
		}
		r.Value, r.Unit = v, opt.Basis.String()
	}
	r.Text = CertText(r.V, r.U, r.LOD, r.LOQ)
	return r, nil
}

// group computes one group's statistics from the reported rows idx.
func (s *Summary) group(name, compound string, idx []int) Group {
	g := Group{Name: name, Compound: compound}
	vals := make([]float64, len(idx))
	var lod, loq float64
	for i, j := range idx {
		r := s.Reported[j]
		g.Unit = r.Unit
		vals[i] = r.V
		lod += r.LOD / float64(len(idx))
		loq += r.LOQ / float64(len(idx))
		g.Members = append(g.Members, Member{Sample: r.Sample, Value: r.V})
	}
	g.N, g.Mean, g.SD, g.RSD = Stats(vals)
	g.Reported = CertText(g.Mean, g.SD, lod, loq)
	g.GCrit = GrubbsCritical(g.N, s.Alpha)
	var at int
	var out bool
	g.G, at, out = Grubbs(vals, s.Alpha)
	// Precision is judged on quantifiable results only: a group whose
	// mean is below its mean LOQ is noise about zero, and its RSD says
	// nothing (common practice).
	if loq > 0 && g.Mean < loq {
		return g
	}
	if g.RSD > s.MaxRSD {
		g.Flags = append(g.Flags, FlagRepRSD)
	}
	if out {
		g.Members[at].Outlier = true
		g.Flags = append(g.Flags, FlagRepOutlier)
	}
	return g
}
