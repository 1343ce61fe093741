package history

import (
	"context"
	"database/sql"
	"math"
	"sort"
	"strings"
	"time"

	"huesolve/internal/pkgerr"
	"huesolve/unmix"
	"huesolve/validate"
)

// Kinds of run.
const (
	KindVerify = "verify" // check standards (verify)
	KindSolve  = "solve"  // samples (solve)
)

// Run is one recorded run: what made it (the metadata a result's
// provenance needs) and what it found.
type Run struct {
	ID              int64
	Kind            string
	Time            time.Time // UTC
	ToolVersion     string
	CommandLine     string
	Reference       string // the reference set's path
	ReferenceSHA256 string
	// Pass is the run's verdict where it has one (verify: every compound
	// passed acceptance); nil for solve.
	Pass *bool
	// Meta holds further metadata as key -> text (settings, method, ...);
	// the schema keeps it open so that later fields need no migration.
	Meta   map[string]string
	Inputs []Input
	Checks []CheckResult
	// Samples holds one row per sample and compound.
	Samples []SampleResult
	// NChecks and NSamples count the rows when a run is listed without
	// them (Runs).
	NChecks, NSamples int
}

// Input is one input file and its SHA-256 (lower-case hex; empty when
// the file could not be read).
type Input struct {
	Path   string
	SHA256 string
}

// CheckResult is one compound in one check standard.
type CheckResult struct {
	Standard, Compound, Unit string
	Known, Found, SE         float64
	// Recovery is 100 Found/Known in percent, NaN when Known is 0.
	Recovery float64
	Pass     bool
	Flags    []string
}

// SampleResult is one compound in one sample.
type SampleResult struct {
	Sample, Source, Compound, Unit string
	Conc, SE, LOD, LOQ             float64
	Flags                          []string
}

// ChecksOf turns verify's check rows into check results.
func ChecksOf(v *validate.Verification) []CheckResult {
	out := make([]CheckResult, 0, len(v.Rows))
	for _, r := range v.Rows {
		c := CheckResult{Standard: r.Standard, Compound: r.Compound, Unit: r.Unit, Known: r.Known, Found: r.Found, SE: r.SE,
			Recovery: math.NaN(), Pass: r.Pass, Flags: flagText(r.Flags)}
		if r.Recovery != nil {
			c.Recovery = *r.Recovery
		}
		out = append(out, c)
	}
	return out
}

// SamplesOf turns one solved sample into its rows (one per compound);
// the sample's own flags are added to each compound's.
func SamplesOf(r *unmix.Result) []SampleResult {
	out := make([]SampleResult, 0, len(r.Amounts))
	for _, a := range r.Amounts {
		flags := append(flagText(r.Flags), flagText(a.Flags)...)
		out = append(out, SampleResult{Sample: r.Sample, Source: r.Source, Compound: a.Compound, Unit: a.Unit,
			Conc: a.Conc, SE: a.SE, LOD: a.LOD, LOQ: a.LOQ, Flags: flags})
	}
	return out
}

func flagText(fs []unmix.Flag) []string {
	out := make([]string, 0, len(fs))
	for _, f := range fs {
		out = append(out, string(f))
	}
	return out
}

// nullable stores NaN and infinities as NULL: SQLite has no NaN.
func nullable(x float64) sql.NullFloat64 {
	return sql.NullFloat64{Float64: x, Valid: !math.IsNaN(x) && !math.IsInf(x, 0)}
}

// Record appends run in one transaction and returns its id: either the
// whole run is in the file afterwards or nothing of it is.
func (d *DB) Record(ctx context.Context, run *Run) (int64, error) {
	if run.Kind != KindVerify && run.Kind != KindSolve {
		return 0, pkgerr.Errorf("history", "run kind %q: want %s or %s", run.Kind, KindVerify, KindSolve)
	}
	tx, err := d.db.BeginTx(ctx, nil)
	if err != nil {
		return 0, d.wrap(err)
	}
	defer tx.Rollback()
	id, err := d.insert(ctx, tx, run)
	if err != nil {
		return 0, d.wrap(err)
	}
	if err := tx.Commit(); err != nil {
		return 0, d.wrap(err)
	}
	return id, nil
}

// insert writes run's rows in tx.
func (d *DB) insert(ctx context.Context, tx *sql.Tx, run *Run) (int64, error) {
	var pass sql.NullBool
	if run.Pass != nil {
		pass = sql.NullBool{Bool: *run.Pass, Valid: true}
	}
	res, err := tx.ExecContext(ctx, `INSERT INTO runs (kind, time_utc, tool_version, command_line, reference, reference_sha256, pass)
		VALUES (?, ?, ?, ?, ?, ?, ?)`, run.Kind, run.Time.UTC().Format(time.RFC3339), run.ToolVersion, run.CommandLine,
		run.Reference, run.ReferenceSHA256, pass)
	if err != nil {
		return 0, err
	}
	id, err := res.LastInsertId()
	if err != nil {
		return 0, err
	}
	keys := make([]string, 0, len(run.Meta))
	for k := range run.Meta {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if _, err := tx.ExecContext(ctx, `INSERT INTO run_meta (run_id, key, value) VALUES (?, ?, ?)`, id, k, run.Meta[k]); err != nil {
			return 0, err
		}
	}
	for _, in := range run.Inputs {
		if _, err := tx.ExecContext(ctx, `INSERT INTO run_inputs (run_id, path, sha256) VALUES (?, ?, ?)`, id, in.Path, in.SHA256); err != nil {
			return 0, err
		}
	}
	for _, c := range run.Checks {
		if _, err := tx.ExecContext(ctx, `INSERT INTO checks (run_id, standard, compound, unit, known, found, se, recovery_pct, pass, flags)
			VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`, id, c.Standard, c.Compound, c.Unit, c.Known, c.Found, nullable(c.SE),
			nullable(c.Recovery), c.Pass, strings.Join(c.Flags, " ")); err != nil {
			return 0, err
		}
	}
	for _, s := range run.Samples {
		if _, err := tx.ExecContext(ctx, `INSERT INTO samples (run_id, sample, source, compound, unit, conc, se, lod, loq, flags)
			VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`, id, s.Sample, s.Source, s.Compound, s.Unit, nullable(s.Conc), nullable(s.SE),
			nullable(s.LOD), nullable(s.LOQ), strings.Join(s.Flags, " ")); err != nil {
			return 0, err
		}
	}
	return id, nil
}

// Runs lists the recorded runs in order of id, with their metadata,
// inputs and the number of check and sample rows (not the rows).
func (d *DB) Runs(ctx context.Context) ([]Run, error) {
	rows, err := d.db.QueryContext(ctx, `SELECT r.id, r.kind, r.time_utc, r.tool_version, r.command_line, r.reference, r.reference_sha256, r.pass,
		(SELECT count(*) FROM checks c WHERE c.run_id = r.id), (SELECT count(*) FROM samples s WHERE s.run_id = r.id)
		FROM runs r ORDER BY r.id`)
	if err != nil {
		return nil, d.wrap(err)
	}
	defer rows.Close()
	var runs []Run
	for rows.Next() {
		var r Run
		var t string
		var pass sql.NullBool
		if err := rows.Scan(&r.ID, &r.Kind, &t, &r.ToolVersion, &r.CommandLine, &r.Reference, &r.ReferenceSHA256, &pass, &r.NChecks, &r.NSamples); err != nil {
			return nil, d.wrap(err)
		}
		if r.Time, err = time.Parse(time.RFC3339, t); err != nil {
			return nil, pkgerr.Errorf("history", "%s: run %d: time %q: %w", d.path, r.ID, t, ErrDamaged)
		}
		if pass.Valid {
			p := pass.Bool
			r.Pass = &p
		}
		runs = append(runs, r)
	}
	if err := rows.Err(); err != nil {
		return nil, d.wrap(err)
	}
	return runs, nil
}

// Point is one check result in a series: the run, its time and the
// recovery in percent.
type Point struct {
	RunID    int64
	Time     time.Time
	Recovery float64
}

// Series is one compound in one check standard across runs, in order of
// run.
type Series struct {
	Compound, Standard string
	Points             []Point
}

// CheckSeries returns, per compound and check standard (in that order),
// the recoveries of the standards that hold the compound (known above
// zero) in order of run. Several results for one standard in one run
// (replicate scans) are each a point.
func (d *DB) CheckSeries(ctx context.Context) ([]Series, error) {
	rows, err := d.db.QueryContext(ctx, `SELECT c.compound, c.standard, r.id, r.time_utc, c.recovery_pct FROM checks c JOIN runs r ON r.id = c.run_id
		WHERE c.recovery_pct IS NOT NULL ORDER BY c.compound, c.standard, r.id, c.rowid`)
	if err != nil {
		return nil, d.wrap(err)
	}
	defer rows.Close()
	var out []Series
	for rows.Next() {
		var comp, std, t string
		var p Point
		if err := rows.Scan(&comp, &std, &p.RunID, &t, &p.Recovery); err != nil {
			return nil, d.wrap(err)
		}
		if p.Time, err = time.Parse(time.RFC3339, t); err != nil {
			return nil, pkgerr.Errorf("history", "%s: run %d: time %q: %w", d.path, p.RunID, t, ErrDamaged)
		}
		if n := len(out); n == 0 || out[n-1].Compound != comp || out[n-1].Standard != std {
			out = append(out, Series{Compound: comp, Standard: std})
		}
		s := &out[len(out)-1]
		s.Points = append(s.Points, p)
	}
	if err := rows.Err(); err != nil {
		return nil, d.wrap(err)
	}
	return out, nil
}

// Count returns the number of rows of runs, checks and samples (for tests
// and the listing).
func (d *DB) Count(ctx context.Context) (runs, checks, samples int, err error) {
	err = d.db.QueryRowContext(ctx, `SELECT (SELECT count(*) FROM runs), (SELECT count(*) FROM checks), (SELECT count(*) FROM samples)`).Scan(&runs, &checks, &samples)
	return runs, checks, samples, d.wrap(err)
}

// Earlier returns the id of the latest recorded run of run's kind with the
// same reference set and the same inputs as run, by their SHA-256 (paths
// may differ: the same files named from another folder), or 0 when there
// is none or run lists no inputs. Recording such a run again counts its
// check results twice on the control charts.
func (d *DB) Earlier(ctx context.Context, run *Run) (int64, error) {
	want := inputKey(run.Inputs)
	if want == "" {
		return 0, nil
	}
	rows, err := d.db.QueryContext(ctx, `SELECT r.id, i.sha256 FROM runs r JOIN run_inputs i ON i.run_id = r.id
		WHERE r.kind = ? AND r.reference_sha256 = ? ORDER BY r.id`, run.Kind, run.ReferenceSHA256)
	if err != nil {
		return 0, d.wrap(err)
	}
	defer rows.Close()
	byRun := map[int64][]Input{}
	var ids []int64
	for rows.Next() {
		var id int64
		var in Input
		if err := rows.Scan(&id, &in.SHA256); err != nil {
			return 0, d.wrap(err)
		}
		if _, ok := byRun[id]; !ok {
			ids = append(ids, id)
		}
		byRun[id] = append(byRun[id], in)
	}
	if err := rows.Err(); err != nil {
		return 0, d.wrap(err)
	}
	for k := len(ids) - 1; k >= 0; k-- {
		if inputKey(byRun[ids[k]]) == want {
			return ids[k], nil
		}
	}
	return 0, nil
}

// inputKey is the inputs' SHA-256 sums, sorted and joined ("" for none).
func inputKey(ins []Input) string {
	s := make([]string, len(ins))
	for i, in := range ins {
		s[i] = in.SHA256
	}
	sort.Strings(s)
	return strings.Join(s, " ")
}
