package report

import (
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"

	"huesolve/internal/pkgerr"
	"huesolve/lab"
)

// LabWriter is a ResultWriter that can end its document with the lab
// section: every scan on the reporting basis and the replicate groups
// (package lab). SetLab must come before Close; the table, CSV and JSON
// writers implement it.
type LabWriter interface {
	SetLab(s *lab.Summary)
}

// SetLab sets the lab section written after the results table.
func (t *tableWriter) SetLab(s *lab.Summary) { t.lab = s }

// SetLab sets the lab sections written after the result rows.
func (c *CSVWriter) SetLab(s *lab.Summary) { c.lab = s }

// SetLab sets the "lab" member written before "failed".
func (j *jsonWriter) SetLab(s *lab.Summary) { j.lab = s }

// SetLab sets the lab tables shown after the results.
func (s *SolveReview) SetLab(l *lab.Summary) { s.lab = l }

// labTables are the review report's tables of the lab section: reported
// values, and replicate groups when there are any (none for nil).
func labTables(s *lab.Summary) []htmlTable {
	if s == nil {
		return nil
	}
	rep := htmlTable{ID: "reported", Caption: "Reported on basis " + termText(basisText(s)) + ": value ± standard uncertainty (2 significant figures) and certificate text",
		Cols: []htmlCol{{Label: "Sample"}, {Label: "Group"}, {Label: "Compound"}, {Label: "Unit"}, {Label: "Value", Numeric: true}, {Label: "Reported"}}}
	for _, r := range s.Reported {
		v, u := lab.Round(r.V, r.U)
		if u != "" {
			v += " ± " + u
		}
		rep.Rows = append(rep.Rows, htmlRow{Cells: []htmlCell{textCell(r.Sample), textCell(r.Group), textCell(r.Compound), textCell(r.Unit),
			numCell(v, r.V), textCell(r.Text)}})
	}
	if len(s.Groups) == 0 {
		return []htmlTable{rep}
	}
	grp := htmlTable{ID: "groups", Caption: fmt.Sprintf("Replicate groups: RSD limit %s %%, Grubbs' test at alpha %s for n >= 3 (* outlier)", num(s.MaxRSD), num(s.Alpha)),
		Cols: []htmlCol{{Label: "Group"}, {Label: "Compound"}, {Label: "Unit"}, {Label: "n", Numeric: true}, {Label: "Mean ± SD", Numeric: true},
			{Label: "RSD %", Numeric: true}, {Label: "Reported"}, {Label: "Members"}, {Label: "Flags"}}}
	for _, g := range s.Groups {
		mean, sd := lab.Round(g.Mean, g.SD)
		if sd != "" {
			mean += " ± " + sd
		}
		var members []string
		for _, m := range g.Members {
			mark := ""
			if m.Outlier {
				mark = "*"
			}
			members = append(members, m.Sample+mark+" "+sig(m.Value, 4))
		}
		flags := "-"
		if len(g.Flags) > 0 {
			flags = "!" + joinFlags(g.Flags, " !")
		}
		grp.Rows = append(grp.Rows, htmlRow{Flagged: len(g.Flags) > 0, Cells: []htmlCell{textCell(g.Name), textCell(g.Compound), textCell(g.Unit),
			numCell(strconv.Itoa(g.N), float64(g.N)), numCell(mean, g.Mean), numCell(fixed(g.RSD, 1), g.RSD), textCell(g.Reported),
			textCell(strings.Join(members, ", ")), {Text: flags, Warn: len(g.Flags) > 0}}})
	}
	return []htmlTable{rep, grp}
}

// basisText names the unit of a lab section's values.
func basisText(s *lab.Summary) string {
	if s.Unit == "" {
		return "the results' unit"
	}
	return s.Unit
}

// labStatus gives the lab section a status column (a run's verdicts):
// each sample's and each group's status by name. A nil *labStatus adds
// no column.
type labStatus struct{ sample, group map[string]string }

// of is the status column's cell for name in m ("" without a column).
func (st *labStatus) of(m func(*labStatus) map[string]string, name string) string {
	if st == nil {
		return ""
	}
	return m(st)[name]
}

func sampleStatus(st *labStatus) map[string]string { return st.sample }
func groupStatus(st *labStatus) map[string]string  { return st.group }

// writeLabTable writes the lab section as two tables: the reported
// values, and the replicate groups when there are any.
func writeLabTable(w io.Writer, s *lab.Summary) error { return writeLabTableStatus(w, s, nil) }

// writeLabTableStatus is writeLabTable with a status column when st is
// not nil.
func writeLabTableStatus(w io.Writer, s *lab.Summary, st *labStatus) error {
	if _, err := fmt.Fprintf(w, "\nReported (basis: %s; value ± standard uncertainty, uncertainty to 2 significant figures):\n", termText(basisText(s))); err != nil {
		return err
	}
	rows := make([][]string, 0, len(s.Reported))
	for _, r := range s.Reported {
		v, u := lab.Round(r.V, r.U)
		if u != "" {
			v += " ± " + u
		}
		row := []string{termText(r.Sample), termText(r.Group), termText(r.Compound), termText(r.Unit), v, r.Text}
		if st != nil {
			row = append(row, st.of(sampleStatus, r.Sample))
		}
		rows = append(rows, row)
	}
	head := []string{"Sample", "Group", "Compound", "Unit", "Value", "Reported"}
	if st != nil {
		head = append(head, "Status")
	}
	if err := plainTable(w, head, rows); err != nil {
		return err
	}
	if len(s.Groups) == 0 {
		return nil
	}
	if _, err := fmt.Fprintf(w, "\nReplicate groups (RSD limit %s %%, Grubbs' test at alpha %s for n >= 3; * outlier):\n", num(s.MaxRSD), num(s.Alpha)); err != nil {
		return err
	}
	rows = rows[:0]
	for _, g := range s.Groups {
		var members []string
		for _, m := range g.Members {
			mark := ""
			if m.Outlier {
				mark = "*"
			}
			members = append(members, termText(m.Sample)+mark+" "+sig(m.Value, 4))
		}
		flags := make([]string, len(g.Flags))
		for i, f := range g.Flags {
			flags[i] = "!" + string(f)
		}
		mean, sd := lab.Round(g.Mean, g.SD)
		if sd != "" {
			mean += " ± " + sd
		}
		row := []string{termText(g.Name), termText(g.Compound), termText(g.Unit), strconv.Itoa(g.N),
			mean, fixed(g.RSD, 1), g.Reported, strings.Join(members, ", "), strings.Join(flags, " ")}
		if st != nil {
			row = append(row, st.of(groupStatus, g.Name))
		}
		rows = append(rows, row)
	}
	head = []string{"Group", "Compound", "Unit", "n", "Mean ± SD", "RSD %", "Reported", "Members", "Flags"}
	if st != nil {
		head = append(head, "Status")
	}
	if err := plainTable(w, head, rows); err != nil {
		return err
	}
	_, err := fmt.Fprintf(w, "Flags: !%s RSD above the limit; !%s a member is an outlier by Grubbs' test\n", lab.FlagRepRSD, lab.FlagRepOutlier)
	return err
}

// plainTable renders header and rows with tablewriter.
func plainTable(w io.Writer, header []string, rows [][]string) error {
	table := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAutoWrap(tw.WrapNone),
		tablewriter.WithHeaderAutoWrap(tw.WrapNone),
		tablewriter.WithTrimSpace(tw.Off),
	)
	table.Header(header)
	for _, r := range rows {
		if err := table.Append(r); err != nil {
			return pkgerr.Errorf("report", "table: %w", err)
		}
	}
	if err := table.Render(); err != nil {
		return pkgerr.Errorf("report", "table: %w", err)
	}
	return nil
}

// appendLabCSV appends the lab sections, each after a blank line and
// with its own header: reported_sample, group, compound, unit, value, u,
// lod, loq, reported; then, when there are groups: group, compound, unit,
// n, mean, sd, rsd_pct, reported, grubbs_g, grubbs_crit, members (sample
// and value pairs separated by spaces, "sample=value"), outliers, flags.
func appendLabCSV(b []byte, s *lab.Summary) []byte { return appendLabCSVStatus(b, s, nil) }

// appendLabCSVStatus is appendLabCSV with a last column status in both
// sections when st is not nil.
func appendLabCSVStatus(b []byte, s *lab.Summary, st *labStatus) []byte {
	text := func(v string) { b = append(b, ','); b = appendCSVText(b, v) }
	field := func(v float64) { b = append(b, ','); b = appendNum(b, v) }
	status := func(m func(*labStatus) map[string]string, name string) {
		if st != nil {
			text(st.of(m, name))
		}
	}
	head := func(h string) {
		b = append(b, h...)
		if st != nil {
			b = append(b, ",status"...)
		}
		b = append(b, '\n')
	}
	head("\nreported_sample,group,compound,unit,value,u,lod,loq,reported")
	for _, r := range s.Reported {
		b = appendCSVText(b, r.Sample)
		text(r.Group)
		text(r.Compound)
		text(r.Unit)
		field(r.V)
		field(r.U)
		field(r.LOD)
		field(r.LOQ)
		text(r.Text)
		status(sampleStatus, r.Sample)
		b = append(b, '\n')
	}
	if len(s.Groups) == 0 {
		return b
	}
	head("\ngroup,compound,unit,n,mean,sd,rsd_pct,reported,grubbs_g,grubbs_crit,members,outliers,flags")
	for _, g := range s.Groups {
		b = appendCSVText(b, g.Name)
		text(g.Compound)
		text(g.Unit)
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(g.N), 10)
		field(g.Mean)
		field(g.SD)
		field(g.RSD)
		text(g.Reported)
		field(g.G)
		field(g.GCrit)
		var ms, outs []string
		for _, m := range g.Members {
			ms = append(ms, m.Sample+"="+num(m.Value))
			if m.Outlier {
				outs = append(outs, m.Sample)
			}
		}
		text(strings.Join(ms, " "))
		text(strings.Join(outs, " "))
		text(joinFlags(g.Flags, " "))
		status(groupStatus, g.Name)
		b = append(b, '\n')
	}
	return b
}

// appendLabJSON appends `,\n "lab": {...}`: "basis" (absent when results
// stay in their unit), "max_rsd_pct", "grubbs_alpha", "reported" (sample,
// group, compound, unit, value, u, lod, loq, reported) and "groups"
// (group, compound, unit, n, mean, sd, rsd_pct, reported, grubbs_g,
// grubbs_crit, members [{sample, value, outlier}], flags). A number that
// is not defined (SD of one member, Grubbs' statistic below n = 3) is
// left out.
func appendLabJSON(b []byte, s *lab.Summary) []byte { return appendLabJSONStatus(b, s, nil) }

// appendLabJSONStatus is appendLabJSON with a "status" member in each
// reported value and group when st is not nil.
func appendLabJSONStatus(b []byte, s *lab.Summary, st *labStatus) []byte {
	field := func(name string, v float64) {
		if finite(v) {
			b = append(b, ", \""+name+"\": "...)
			b = appendNum(b, v)
		}
	}
	str := func(name, v string) {
		b = append(b, ", \""+name+"\": "...)
		b = appendString(b, v)
	}
	b = append(b, ",\n \"lab\": {\"max_rsd_pct\": "...)
	b = appendNum(b, s.MaxRSD)
	field("grubbs_alpha", s.Alpha)
	if s.Unit != "" {
		str("basis", s.Unit)
	}
	b = append(b, `, "reported": [`...)
	for i, r := range s.Reported {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, "\n  {\"sample\": "...)
		b = appendString(b, r.Sample)
		str("group", r.Group)
		str("compound", r.Compound)
		str("unit", r.Unit)
		field("value", r.V)
		field("u", r.U)
		field("lod", r.LOD)
		field("loq", r.LOQ)
		str("reported", r.Text)
		if st != nil {
			str("status", st.of(sampleStatus, r.Sample))
		}
		b = append(b, '}')
	}
	b = append(b, "],\n  \"groups\": ["...)
	for i, g := range s.Groups {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, "\n  {\"group\": "...)
		b = appendString(b, g.Name)
		str("compound", g.Compound)
		str("unit", g.Unit)
		b = append(b, `, "n": `...)
		b = strconv.AppendInt(b, int64(g.N), 10)
		field("mean", g.Mean)
		field("sd", g.SD)
		field("rsd_pct", g.RSD)
		str("reported", g.Reported)
		field("grubbs_g", g.G)
		field("grubbs_crit", g.GCrit)
		b = append(b, `, "members": [`...)
		for k, m := range g.Members {
			if k > 0 {
				b = append(b, ", "...)
			}
			b = append(b, `{"sample": `...)
			b = appendString(b, m.Sample)
			field("value", m.Value)
			b = append(b, `, "outlier": `...)
			b = strconv.AppendBool(b, m.Outlier)
			b = append(b, '}')
		}
		b = append(b, ']')
		b = appendFlags(b, g.Flags)
		if st != nil {
			str("status", st.of(groupStatus, g.Name))
		}
		b = append(b, '}')
	}
	return append(b, "]}"...)
}
