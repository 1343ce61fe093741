package sequence

import (
	"slices"

	"huesolve/lab"
	"huesolve/reference"
	"huesolve/unmix"
)

// GroupVerdict is one replicate group's verdict in a run. A group is
// valid only when every member is valid (bracketed by two passing
// checks): its mean stands on all its members, so one member measured
// under a failed check makes the mean unreportable, and the group is
// measured again as a whole rather than reported from the members left.
type GroupVerdict struct {
	Group  string `json:"group"`
	Status string `json:"status"` // Valid or Invalid
	// Members are the members' order numbers in the run; NotValid those
	// of the members that are invalid or unbracketed.
	Members  []int `json:"members"`
	NotValid []int `json:"not_valid,omitempty"`
	// Flags are the group's replicate flags over all compounds
	// (lab.FlagRepRSD, lab.FlagRepOutlier).
	Flags []reference.Flag `json:"flags,omitempty"`
}

// labCells are the sample rows of a run sheet as package lab reads a
// sample sheet: by name, with the cells of labColumns.
type labCells struct {
	names []string
	rows  map[string]*Row
}

func (c labCells) Names() []string { return c.names }

func (c labCells) Line(name string) int {
	if r := c.rows[name]; r != nil {
		return r.Line
	}
	return 0
}

func (c labCells) Extra(name, column string) (unmix.Cell, bool) {
	r := c.rows[name]
	i := slices.Index(labColumns, column)
	if r == nil || i < 0 || r.ExtraCols[firstLab+i] == 0 {
		return unmix.Cell{}, false
	}
	return unmix.Cell{Text: r.Extra[firstLab+i], Line: r.Line, Column: r.ExtraCols[firstLab+i]}, true
}

// usesLab reports whether some sample row gives a group, replicate_of or
// a preparation cell.
func usesLab(sh *Sheet) bool {
	for _, r := range sh.Rows {
		for i := 2; i < len(labColumns); i++ { // past sample and dilution
			if r.Role == RoleSample && r.Extra[firstLab+i] != "" {
				return true
			}
		}
	}
	return false
}

// evaluateLab puts the samples on the basis of opt and gathers their
// replicate groups (lab.Evaluate), when a basis is given or some sample
// row uses a group or preparation column; each group's verdict follows
// its members' (GroupVerdict). Two sample rows of one name are refused
// then, naming both lines: groups and preparations go by name.
func (run *Run) evaluateLab(sh *Sheet, opt lab.Options) error {
	if opt.Basis == nil && !usesLab(sh) {
		return nil
	}
	c := labCells{rows: map[string]*Row{}}
	for i := range sh.Rows {
		r := &sh.Rows[i]
		if r.Role != RoleSample {
			continue
		}
		if p := c.rows[r.Name]; p != nil {
			return rowErr(sh.Path, r.Row, firstLab, "sample %q is named twice (lines %d and %d): give each sample row its own name in a sample column", r.Name, p.Line, r.Line)
		}
		c.rows[r.Name] = r
		c.names = append(c.names, r.Name)
	}
	ls, err := lab.ReadCells(sh.Path, c)
	if err != nil {
		return err
	}
	var scans []lab.Scan
	status := map[string]*Entry{}
	for i := range run.Entries {
		e := &run.Entries[i]
		if e.Role != RoleSample {
			continue
		}
		e.Group = ls.Rows[e.Name].Group
		status[e.Name] = e
		sc := lab.Scan{Sample: e.Name, Source: e.Name, Row: e.Name}
		for _, a := range e.Amounts {
			sc.Amounts = append(sc.Amounts, lab.Amount{Compound: a.Compound, Unit: a.Unit, Conc: a.Conc, SE: a.SE, LOD: a.LOD, LOQ: a.LOQ})
		}
		scans = append(scans, sc)
	}
	if run.Lab, err = lab.Evaluate(scans, ls, opt); err != nil {
		return err
	}
	run.groupVerdicts(status)
	return nil
}

// groupVerdicts fills Run.Groups from the sheet's groups, in the order
// their first member comes in the run.
func (run *Run) groupVerdicts(entries map[string]*Entry) {
	at := map[string]int{}
	for _, e := range run.Entries {
		if e.Role != RoleSample || e.Group == "" {
			continue
		}
		k, ok := at[e.Group]
		if !ok {
			k = len(run.Groups)
			at[e.Group] = k
			run.Groups = append(run.Groups, GroupVerdict{Group: e.Group, Status: Valid})
		}
		g := &run.Groups[k]
		g.Members = append(g.Members, e.Order)
		if entries[e.Name].Status != Valid {
			g.Status = Invalid
			g.NotValid = append(g.NotValid, e.Order)
		}
	}
	for _, lg := range run.Lab.Groups {
		g := &run.Groups[at[lg.Name]]
		for _, f := range lg.Flags {
			if !slices.Contains(g.Flags, f) {
				g.Flags = append(g.Flags, f)
			}
		}
	}
	for _, g := range run.Groups {
		if g.Status == Valid {
			run.GroupsValid++
		} else {
			run.GroupsInvalid++
		}
		if len(g.Flags) > 0 {
			run.GroupsFlagged++
		}
	}
}
