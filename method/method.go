// Package method is the analytical method file: a reference set, bound by
// its checksum, together with the settings of the fit that solve and
// verify use with it, the acceptance limits verify judges by and how
// results are reported and kept (basis, replicate RSD limit, QC history
// file). Commands write it once the settings are chosen (window, verify,
// sequence) and read it in place of a reference set, so that the settings
// are not retyped on every run.
//
// The file is versioned, checksummed JSON like a reference set's: a file
// changed after it was saved, from a newer schema, or holding a value out
// of range is refused on load, and so is a reference set whose checksum
// is not the one the method records.
package method

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"
	"unicode"

	"huesolve/baseline"
	"huesolve/internal/atomicfile"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/spectrum"
)

// SchemaVersion is the newest version of the method file format this
// build reads and writes; files of a newer schema are refused. Schema 2
// added the reporting section (Method.Report) and the fit's interferents
// (Fit.Interferents). A method without either is still written as schema
// 1, so that builds reading only schema 1 keep reading it, and refuse one
// with them as newer rather than fit without the interferents.
const SchemaVersion = 2

// reportSchema is the first schema with the reporting section and the
// fit's interferents.
const reportSchema = 2

// maxBasisLen bounds a reporting basis' text (a unit, "% w/w", ...).
const maxBasisLen = 32

// Format is the value of a method file's "format" field.
const Format = "huesolve-method"

// MaxShiftLimitNM bounds the largest wavelength shift a fit may look for:
// a shift between instruments is a few nm; tens of nm is a wrong
// reference set, not a shift (project choice).
const MaxShiftLimitNM = 50

// maxMethodBytes is the largest method file Load reads: a method is a few
// hundred bytes; a megabyte is not a method.
const maxMethodBytes = 1 << 20

// Method is a method file.
type Method struct {
	Format string `json:"format"`
	Schema int    `json:"schema"`
	// Reference is the reference set the method was made with.
	Reference Reference `json:"reference_set"`
	// Fit are the settings of the fit.
	Fit Fit `json:"fit"`
	// Acceptance are verify's acceptance limits; nil when the method
	// was made before any verification (by window).
	Acceptance *Acceptance `json:"acceptance,omitempty"`
	// Report is how results are reported and kept (schema 2); nil when
	// the method sets none of it.
	Report *Report `json:"report,omitempty"`
	// Provenance says how the method was made.
	Provenance Provenance `json:"provenance"`
	// Checksum is the SHA-256 of the compact JSON encoding of the method
	// with this field empty.
	Checksum string `json:"checksum"`
}

// Reference binds a reference set: Path is relative to the method file's
// folder (unless absolute), Checksum the set's own checksum field.
type Reference struct {
	Path     string `json:"path"`
	Checksum string `json:"checksum"`
}

// Fit are the settings of the sample fit, as solve's and verify's options
// take them.
type Fit struct {
	// WindowNM is the wavelength window [lo, hi] in nm; nil for the
	// whole reference grid.
	WindowNM *[2]float64 `json:"window_nm,omitempty"`
	// Baseline is the baseline model in the syntax of --baseline
	// (baseline.ParseModel), or AutoBaseline.
	Baseline string `json:"baseline"`
	Weighted bool   `json:"weighted"`
	// Shift: estimate a wavelength shift, up to MaxShiftNM.
	Shift      bool    `json:"shift"`
	MaxShiftNM float64 `json:"max_shift_nm"`
	// Ceiling is the absorbance above which points are left out; 0 for
	// the reference set's.
	Ceiling float64 `json:"ceiling"`
	// Quantity is what scan files hold when they do not say
	// (spectrum.ParseQuantity); "" to take them as read.
	Quantity string `json:"quantity,omitempty"`
	// PathCM is the samples' path length in cm; 0 for the reference
	// set's.
	PathCM float64 `json:"path_cm"`
	// Interferents are the --interferent scans of the fit; omitted when
	// none (methods without them are written as before).
	Interferents []Interferent `json:"interferents,omitempty"`
}

// Acceptance are the limits verify judges check standards by.
type Acceptance struct {
	RecoveryLoPct  float64 `json:"recovery_lo_pct"`
	RecoveryHiPct  float64 `json:"recovery_hi_pct"`
	MaxRSDPct      float64 `json:"max_rsd_pct"`
	MinSelectivity float64 `json:"min_selectivity"`
}

// Report are the reporting settings of solve and sequence and the QC
// history file solve, verify and sequence record runs in. An empty field
// leaves the command's default.
type Report struct {
	// Basis is the reporting basis in the syntax of --basis (mg/kg,
	// % w/w, µg/L, ...); the commands check it.
	Basis string `json:"basis,omitempty"`
	// MaxRepRSDPct is a replicate group's RSD limit in per cent.
	MaxRepRSDPct float64 `json:"max_rep_rsd_pct,omitempty"`
	// Record is the QC history file, relative to the method file's
	// folder unless absolute (see RecordPath).
	Record string `json:"record,omitempty"`
}

// Provenance says which tool made the method, when, and by which command
// line (program base name and arguments as typed).
type Provenance struct {
	Tool    string   `json:"tool"`
	Version string   `json:"version"`
	Created string   `json:"created"` // RFC 3339, UTC
	Command []string `json:"command"`
}

// AutoBaseline is Fit.Baseline for the automatic model choice (--baseline
// auto, the commands' default).
const AutoBaseline = "auto"

// Sentinel causes of errors, tested with errors.Is.
var (
	// ErrChecksum: the method file's content does not match its checksum.
	ErrChecksum = errors.New("checksum does not match the content: the method was changed after it was saved (edited by hand or damaged); save it again with window or verify --save-method")
	// ErrNewerSchema: the file was written by a newer huesolve.
	ErrNewerSchema = errors.New("the file uses a newer method schema than this huesolve reads; update huesolve")
	// ErrNotMethod: the file is not a method file.
	ErrNotMethod = errors.New("not a huesolve method file")
	// ErrInvalid: a value is out of range.
	ErrInvalid = errors.New("invalid method")
	// ErrWrongSet: the reference set is not the one the method binds.
	ErrWrongSet = errors.New("the reference set is not the one the method was made with")
)

// computeChecksum returns the SHA-256, in lower-case hex, of m's compact
// JSON encoding with the Checksum field empty.
func (m *Method) computeChecksum() (string, error) {
	c := *m
	c.Checksum = ""
	b, err := json.Marshal(&c)
	if err != nil {
		return "", pkgerr.Errorf("method", "encode: %w", err)
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:]), nil
}

// Validate checks every field: the format name, a reference path and a
// 64-digit checksum, a window with 0 < lo < hi <= 1e6 nm, a baseline
// model baseline.ParseModel reads (or AutoBaseline), 0 < max_shift_nm <= MaxShiftLimitNM,
// 0 <= ceiling <= reference.MaxCeiling, a quantity spectrum.ParseQuantity
// reads, path_cm 0 or within reference.MinPathCM..MaxPathCM, and
// acceptance limits with 0 < lo < hi <= 10000 %, 0 < max RSD <= 100 % and
// 0 < min selectivity < 1. Errors wrap ErrInvalid or ErrNotMethod and
// name the field.
func (m *Method) Validate() error {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: %s", ErrInvalid, fmt.Sprintf(format, a...))
	}
	if m.Format != Format {
		return fmt.Errorf("%w: format %q, want %q", ErrNotMethod, m.Format, Format)
	}
	if m.Reference.Path == "" {
		return bad("reference_set.path is empty")
	}
	if b, err := hex.DecodeString(m.Reference.Checksum); err != nil || len(b) != sha256.Size {
		return bad("reference_set.checksum %q is not a SHA-256 in hex", m.Reference.Checksum)
	}
	f := &m.Fit
	if w := f.WindowNM; w != nil && !(w[0] > 0 && w[1] > w[0] && w[1] <= 1e6) {
		return bad("fit.window_nm [%g, %g]: want 0 < lo < hi", w[0], w[1])
	}
	if _, err := baseline.ParseModel(f.Baseline); err != nil && f.Baseline != AutoBaseline {
		return bad("fit.baseline %q: %v", f.Baseline, err)
	}
	if !(f.MaxShiftNM > 0) || f.MaxShiftNM > MaxShiftLimitNM {
		return bad("fit.max_shift_nm %g: want above 0 and at most %d", f.MaxShiftNM, MaxShiftLimitNM)
	}
	if !(f.Ceiling >= 0) || f.Ceiling > reference.MaxCeiling {
		return bad("fit.ceiling %g: want 0 (the reference set's) up to %d", f.Ceiling, reference.MaxCeiling)
	}
	if _, err := spectrum.ParseQuantity(f.Quantity); err != nil {
		return bad("fit.quantity %q: %v", f.Quantity, err)
	}
	if f.PathCM != 0 && !(f.PathCM >= reference.MinPathCM && f.PathCM <= reference.MaxPathCM) {
		return bad("fit.path_cm %g: want 0 (the reference set's) or %g to %g cm", f.PathCM, float64(reference.MinPathCM), float64(reference.MaxPathCM))
	}
	if err := f.validateInterferents(); err != nil {
		return err
	}
	if a := m.Acceptance; a != nil {
		switch {
		case !(a.RecoveryLoPct > 0 && a.RecoveryHiPct > a.RecoveryLoPct && a.RecoveryHiPct <= 1e4):
			return bad("acceptance recovery %g-%g %%: want 0 < lo < hi", a.RecoveryLoPct, a.RecoveryHiPct)
		case !(a.MaxRSDPct > 0 && a.MaxRSDPct <= 100):
			return bad("acceptance.max_rsd_pct %g: want above 0 and at most 100", a.MaxRSDPct)
		case !(a.MinSelectivity > 0 && a.MinSelectivity < 1):
			return bad("acceptance.min_selectivity %g: want between 0 and 1", a.MinSelectivity)
		}
	}
	return m.Report.validate(bad)
}

// validate checks a reporting section (nil passes): a basis of at most
// maxBasisLen characters with no control characters, an RSD limit of 0
// (the default) or above 0 up to 100 %, and a record path with no
// control characters.
func (r *Report) validate(bad func(format string, a ...any) error) error {
	if r == nil {
		return nil
	}
	printable := func(s string) bool {
		return !strings.ContainsFunc(s, func(c rune) bool { return unicode.IsControl(c) })
	}
	switch {
	case len(r.Basis) > maxBasisLen || !printable(r.Basis):
		return bad("report.basis %q: want a unit of at most %d characters", r.Basis, maxBasisLen)
	case !(r.MaxRepRSDPct >= 0 && r.MaxRepRSDPct <= 100):
		return bad("report.max_rep_rsd_pct %g: want above 0 and at most 100", r.MaxRepRSDPct)
	case !printable(r.Record):
		return bad("report.record %q: a file name without control characters", r.Record)
	case *r == Report{}:
		return bad("report is empty: leave it out")
	}
	return nil
}

// Encode checks m (Validate), sets its format, schema and checksum and
// returns it as indented JSON ending in a newline.
func (m *Method) Encode() ([]byte, error) {
	m.Format = Format
	m.Schema = 1
	if m.Report != nil || len(m.Fit.Interferents) > 0 {
		m.Schema = reportSchema
	}
	if err := m.Validate(); err != nil {
		return nil, pkgerr.Errorf("method", "%w", err)
	}
	sum, err := m.computeChecksum()
	if err != nil {
		return nil, err
	}
	m.Checksum = sum
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return nil, pkgerr.Errorf("method", "encode: %w", err)
	}
	return append(b, '\n'), nil
}

// Save writes m to path atomically (see Encode).
func (m *Method) Save(path string) error {
	b, err := m.Encode()
	if err != nil {
		return err
	}
	if err := atomicfile.WriteBytes(path, b); err != nil {
		return pkgerr.Errorf("method", "%w", err)
	}
	return nil
}

// Load reads a method file, refusing one that is not a method, is of a
// newer schema, does not match its checksum or holds a value out of
// range (Validate). A folder, a named pipe or device, and a file above
// 1 MiB are refused before reading. Errors name the file.
func Load(path string) (*Method, error) {
	f, st, err := spectrum.OpenInput(path)
	if err != nil {
		return nil, pkgerr.Errorf("method", "%w", err)
	}
	defer f.Close()
	fail := func(err error) (*Method, error) { return nil, pkgerr.Errorf("method", "%s: %w", path, err) }
	if st.IsDir() {
		return fail(fmt.Errorf("%w: it is a folder", ErrNotMethod))
	}
	data, err := io.ReadAll(io.LimitReader(f, maxMethodBytes+1))
	if err != nil {
		return nil, pkgerr.Errorf("method", "%w", err)
	}
	if len(data) > maxMethodBytes {
		return fail(fmt.Errorf("%w: more than the %d bytes a method file may take", ErrNotMethod, maxMethodBytes))
	}
	m, err := Decode(data)
	if err != nil {
		return fail(err)
	}
	return m, nil
}

// Decode reads a method file's bytes (a UTF-8 byte order mark is
// skipped) and checks its format, schema, checksum and values.
func Decode(data []byte) (*Method, error) {
	data = bytes.TrimPrefix(data, []byte("\ufeff"))
	var head struct {
		Format string `json:"format"`
		Schema *int   `json:"schema"`
	}
	if err := json.Unmarshal(data, &head); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrNotMethod, err)
	}
	switch {
	case head.Format != Format:
		return nil, fmt.Errorf("%w: its format is %q, not %q", ErrNotMethod, head.Format, Format)
	case head.Schema == nil || *head.Schema < 1:
		return nil, fmt.Errorf("%w: no schema", ErrNotMethod)
	case *head.Schema > SchemaVersion:
		return nil, fmt.Errorf("%w (file schema %d, this build reads up to %d)", ErrNewerSchema, *head.Schema, SchemaVersion)
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	m := new(Method)
	if err := dec.Decode(m); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrNotMethod, err)
	}
	sum, err := m.computeChecksum()
	if err != nil {
		return nil, err
	}
	if m.Checksum != sum {
		return nil, ErrChecksum
	}
	if m.Report != nil && m.Schema < reportSchema {
		return nil, fmt.Errorf("%w: a report section needs schema %d, the file says %d", ErrInvalid, reportSchema, m.Schema)
	}
	if len(m.Fit.Interferents) > 0 && m.Schema < reportSchema {
		return nil, fmt.Errorf("%w: interferents in the fit need schema %d, the file says %d", ErrInvalid, reportSchema, m.Schema)
	}
	if err := m.Validate(); err != nil {
		return nil, err
	}
	return m, nil
}

// RelativePath is the path to store for a reference set at refPath in a
// method file to be written at methodPath: relative to the method file's
// folder when both paths are relative or both absolute, else refPath as
// given.
func RelativePath(methodPath, refPath string) string {
	if filepath.IsAbs(methodPath) != filepath.IsAbs(refPath) {
		return refPath
	}
	rel, err := filepath.Rel(filepath.Dir(methodPath), refPath)
	if err != nil {
		return refPath
	}
	return filepath.ToSlash(rel)
}

// ReferencePath is the path of the method's reference set for a method
// read from methodPath: an absolute path as it is, a relative one taken
// from the method file's folder.
func (m *Method) ReferencePath(methodPath string) string {
	p := filepath.FromSlash(m.Reference.Path)
	if filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(methodPath), p)
}

// RecordPath is the path of the method's QC history file for a method
// read from methodPath ("" when it names none): an absolute path as it
// is, a relative one taken from the method file's folder.
func (m *Method) RecordPath(methodPath string) string {
	if m.Report == nil || m.Report.Record == "" {
		return ""
	}
	p := filepath.FromSlash(m.Report.Record)
	if filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(methodPath), p)
}

// LoadSet loads the method's reference set (read from methodPath) and
// refuses it when its checksum is not the one the method binds
// (ErrWrongSet, naming both checksums and what to do). It returns the
// set and the path it was read from.
func (m *Method) LoadSet(methodPath string) (*reference.Set, string, error) {
	p := m.ReferencePath(methodPath)
	set, err := reference.Load(p)
	if err != nil {
		return nil, p, pkgerr.Errorf("method", "%s names reference set %s: %w", methodPath, p, err)
	}
	if err := m.CheckSet(set); err != nil {
		return nil, p, pkgerr.Errorf("method", "%s: %s: %w", methodPath, p, err)
	}
	return set, p, nil
}

// CheckSet refuses a set whose checksum is not the method's.
func (m *Method) CheckSet(set *reference.Set) error {
	if set.Checksum == m.Reference.Checksum {
		return nil
	}
	return fmt.Errorf("%w: its checksum is %s, the method's %s (the set was rebuilt or replaced since the method was saved); make the method again from this set with window or verify --save-method, or put back the set it was made with",
		ErrWrongSet, short(set.Checksum), short(m.Reference.Checksum))
}

// short is the first 12 digits of a checksum, enough to tell two apart
// in a message.
func short(sum string) string {
	if len(sum) > 12 {
		return sum[:12] + "..."
	}
	return sum
}
