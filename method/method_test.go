package method

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/reference"
)

// sum is an invented checksum (64 hex digits).
const sum = "0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef"

func sample() *Method {
	return &Method{
		Reference:  Reference{Path: "refs.json", Checksum: sum},
		Fit:        Fit{WindowNM: &[2]float64{350, 750}, Baseline: "offset+scatter", Weighted: true, MaxShiftNM: 3, PathCM: 0.5},
		Acceptance: &Acceptance{RecoveryLoPct: 98, RecoveryHiPct: 102, MaxRSDPct: 2, MinSelectivity: 0.01},
		Provenance: Provenance{Tool: "huesolve", Version: "test", Created: "2026-01-01T00:00:00Z", Command: []string{"huesolve", "verify"}},
	}
}

func TestRoundTrip(t *testing.T) {
	m := sample()
	b, err := m.Encode()
	if err != nil {
		t.Fatal(err)
	}
	got, err := Decode(append([]byte("\ufeff"), b...))
	if err != nil {
		t.Fatal(err)
	}
	if got.Checksum != m.Checksum || got.Fit.WindowNM[1] != 750 || got.Fit.Baseline != "offset+scatter" || got.Acceptance.MaxRSDPct != 2 {
		t.Errorf("read back %+v", got)
	}
	again, err := got.Encode()
	if err != nil || !bytes.Equal(again, b) {
		t.Errorf("encoding what was read gives other bytes (%v)", err)
	}
	p := filepath.Join(t.TempDir(), "m.json")
	if err := m.Save(p); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(p); err != nil {
		t.Fatal(err)
	}
}

func TestDecodeRefuses(t *testing.T) {
	b, err := sample().Encode()
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	for _, c := range []struct {
		name, data string
		want       error
	}{
		{"edited", strings.Replace(s, `"max_rsd_pct": 2`, `"max_rsd_pct": 5`, 1), ErrChecksum},
		{"newer", strings.Replace(s, `"schema": 1`, `"schema": 3`, 1), ErrNewerSchema},
		{"other format", strings.Replace(s, `"format": "huesolve-method"`, `"format": "huesolve-results"`, 1), ErrNotMethod},
		{"unknown field", strings.Replace(s, `"fit": {`, `"fit": {"smooth": 3, `, 1), ErrNotMethod},
		{"a reference set", `{"schema": 1, "grid_nm": [400, 402]}`, ErrNotMethod},
		{"not JSON", "window 350-750", ErrNotMethod},
	} {
		if _, err := Decode([]byte(c.data)); !errors.Is(err, c.want) {
			t.Errorf("%s: %v, want %v", c.name, err, c.want)
		}
	}
}

func TestValidateRanges(t *testing.T) {
	for name, edit := range map[string]func(m *Method){
		"window":           func(m *Method) { m.Fit.WindowNM = &[2]float64{750, 350} },
		"baseline":         func(m *Method) { m.Fit.Baseline = "sextic" },
		"max shift":        func(m *Method) { m.Fit.MaxShiftNM = 80 },
		"ceiling":          func(m *Method) { m.Fit.Ceiling = -1 },
		"quantity":         func(m *Method) { m.Fit.Quantity = "fluorescence" },
		"path":             func(m *Method) { m.Fit.PathCM = 1e6 },
		"recovery":         func(m *Method) { m.Acceptance.RecoveryHiPct = 90 },
		"rsd":              func(m *Method) { m.Acceptance.MaxRSDPct = 0 },
		"selectivity":      func(m *Method) { m.Acceptance.MinSelectivity = 1 },
		"checksum of set":  func(m *Method) { m.Reference.Checksum = "abc" },
		"path of set":      func(m *Method) { m.Reference.Path = "" },
		"interferent sha":  func(m *Method) { m.Fit.Interferents = []Interferent{{Path: "haze.csv", SHA256: "abc"}} },
		"interferent path": func(m *Method) { m.Fit.Interferents = []Interferent{{SHA256: sum}} },
	} {
		m := sample()
		edit(m)
		if _, err := m.Encode(); !errors.Is(err, ErrInvalid) {
			t.Errorf("%s: %v, want an invalid method", name, err)
		}
	}
	m := sample()
	m.Acceptance = nil // a method from window has none
	if _, err := m.Encode(); err != nil {
		t.Errorf("no acceptance limits: %v", err)
	}
}

// TestReferencePaths: the set's path is stored relative to the method
// file's folder and read back from there, whatever the folder the
// command runs in.
func TestReferencePaths(t *testing.T) {
	for _, c := range []struct{ method, ref, stored, resolved string }{
		{"results/assay.json", "results/refs.json", "refs.json", "results/refs.json"},
		{"assay.json", "results/refs.json", "results/refs.json", "results/refs.json"},
		{"methods/assay.json", "results/refs.json", "../results/refs.json", "results/refs.json"},
		{"/lab/methods/assay.json", "/lab/refs.json", "../refs.json", "/lab/refs.json"},
		{"assay.json", "/lab/refs.json", "/lab/refs.json", "/lab/refs.json"},
	} {
		stored := RelativePath(c.method, c.ref)
		m := &Method{Reference: Reference{Path: stored}}
		if got := m.ReferencePath(c.method); stored != c.stored || got != filepath.FromSlash(c.resolved) {
			t.Errorf("method %s, set %s: stored %s, read back %s; want %s, %s", c.method, c.ref, stored, got, c.stored, c.resolved)
		}
	}
}

// TestLoadSetChecksum: the set the method names is used only when its
// checksum is the method's.
func TestLoadSetChecksum(t *testing.T) {
	dir := t.TempDir()
	set := &reference.Set{Grid: []float64{400, 410, 420}, PathCM: 1, Ceiling: 2, Noise: []float64{1e-3, 1e-3, 1e-3},
		Compounds: []reference.Compound{{Name: "dye", Unit: "mg/L", Absorptivity: []float64{0.1, 0.2, 0.1}, SE: []float64{1e-4, 1e-4, 1e-4},
			Usable: []bool{true, true, true}, PeakNM: 410, MinStandard: 1, MaxStandard: 10}},
		Provenance: reference.Provenance{Tool: "test", Version: "test", Created: "2026-01-01T00:00:00Z", Sheet: "invented"}}
	refPath := filepath.Join(dir, "refs.json")
	if err := set.Save(refPath); err != nil {
		t.Fatal(err)
	}
	mPath := filepath.Join(dir, "assay.json")
	m := sample()
	m.Reference = Reference{Path: RelativePath(mPath, refPath), Checksum: set.Checksum}
	if _, p, err := m.LoadSet(mPath); err != nil || p != refPath {
		t.Fatalf("LoadSet: %s, %v", p, err)
	}
	bound := set.Checksum
	set.Compounds[0].Absorptivity[1] = 0.21 // rebuilt: another set at the same path
	if err := set.Save(refPath); err != nil {
		t.Fatal(err)
	}
	_, _, err := m.LoadSet(mPath)
	if !errors.Is(err, ErrWrongSet) || !strings.Contains(err.Error(), refPath) || !strings.Contains(err.Error(), bound[:12]) {
		t.Errorf("a rebuilt set: %v", err)
	}
	if err := os.Remove(refPath); err != nil {
		t.Fatal(err)
	}
	if _, _, err := m.LoadSet(mPath); err == nil || !strings.Contains(err.Error(), refPath) {
		t.Errorf("a missing set: %v", err)
	}
}

// FuzzDecode: any bytes give a method or an error, never a panic; a
// method read back encodes to bytes that decode to the same checksum.
func FuzzDecode(f *testing.F) {
	b, err := sample().Encode()
	if err != nil {
		f.Fatal(err)
	}
	f.Add(b)
	f.Add([]byte(`{"format": "huesolve-method", "schema": 1}`))
	f.Add([]byte("\ufeff{}"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Decode(data)
		if err != nil {
			return
		}
		again, err := m.Encode()
		if err != nil {
			t.Fatalf("a method that decoded does not encode: %v", err)
		}
		if back, err := Decode(again); err != nil || back.Checksum != m.Checksum {
			t.Fatalf("re-encoded method: %v", err)
		}
	})
}

// TestInterferentPaths: a method's interferents are read from its folder
// and refused, naming the file, once the file's SHA-256 differs; a method
// without them is written without the field.
func TestInterferentPaths(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "scans", "haze.csv")
	if err := os.MkdirAll(filepath.Dir(f), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(f, []byte("nm,A\n400,0.1\n401,0.2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	h, err := reference.FileSHA256(f)
	if err != nil {
		t.Fatal(err)
	}
	plain, err := sample().Encode()
	if err != nil || bytes.Contains(plain, []byte("interferents")) || !bytes.Contains(plain, []byte(`"schema": 1,`)) {
		t.Fatalf("a method without interferents: %v\n%s", err, plain)
	}
	m := sample()
	m.Fit.Interferents = []Interferent{{Path: RelativePath(filepath.Join(dir, "m.json"), f), SHA256: h}}
	if err := m.Save(filepath.Join(dir, "m.json")); err != nil {
		t.Fatal(err)
	}
	got, err := Load(filepath.Join(dir, "m.json"))
	if err != nil {
		t.Fatal(err)
	}
	if got.Schema != 2 {
		t.Errorf("a method with interferents: schema %d, want 2 (a schema-1 build must refuse it, not fit without them)", got.Schema)
	}
	paths, err := got.InterferentPaths(filepath.Join(dir, "m.json"))
	if err != nil || len(paths) != 1 || paths[0] != f {
		t.Fatalf("paths %q, %v; want %s", paths, err, f)
	}
	if err := os.WriteFile(f, []byte("nm,A\n400,0.1\n401,0.3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := got.InterferentPaths(filepath.Join(dir, "m.json")); err == nil || !strings.Contains(err.Error(), "haze.csv has changed") {
		t.Errorf("changed file: %v", err)
	}
}

// The reporting section: a method without one stays schema 1 (older
// builds read it), one with it is schema 2 and reads back; a schema-1
// file holding one, and out-of-range values, are refused.
func TestReportSection(t *testing.T) {
	b, err := sample().Encode()
	if err != nil || !strings.Contains(string(b), `"schema": 1,`) || strings.Contains(string(b), `"report"`) {
		t.Fatalf("without a report section: %v\n%s", err, b)
	}
	m := sample()
	m.Report = &Report{Basis: "mg/kg", MaxRepRSDPct: 4, Record: "qc/history.db"}
	b, err = m.Encode()
	if err != nil || !strings.Contains(string(b), `"schema": 2,`) {
		t.Fatalf("with a report section: %v\n%s", err, b)
	}
	got, err := Decode(b)
	if err != nil || *got.Report != *m.Report {
		t.Fatalf("read back %+v, %v", got, err)
	}
	if p := got.RecordPath(filepath.Join("lab", "m.json")); p != filepath.Join("lab", "qc", "history.db") {
		t.Errorf("record path %q", p)
	}
	if p := sample().RecordPath("m.json"); p != "" {
		t.Errorf("record path without a report section %q", p)
	}
	// A schema-1 file with a report section (checksum made to match).
	old := *got
	old.Schema, old.Format = 1, Format
	old.Checksum, _ = old.computeChecksum()
	data, _ := json.Marshal(&old)
	if _, err := Decode(data); !errors.Is(err, ErrInvalid) || !strings.Contains(err.Error(), "needs schema 2") {
		t.Errorf("schema 1 with a report section: %v", err)
	}
	for _, r := range []Report{{Basis: strings.Repeat("m", 40)}, {Basis: "mg/kg\x1b"}, {MaxRepRSDPct: -1}, {MaxRepRSDPct: 101}, {Record: "a\nb"}, {}} {
		m := sample()
		m.Report = &r
		if _, err := m.Encode(); !errors.Is(err, ErrInvalid) {
			t.Errorf("report %+v: %v, want ErrInvalid", r, err)
		}
	}
}

// The automatic model choice (the commands' default --baseline) is a
// fit a method may keep: verify --save-method and sequence --save-method
// without --baseline write it.
func TestAutoBaseline(t *testing.T) {
	m := sample()
	m.Fit.Baseline = AutoBaseline
	b, err := m.Encode()
	if err != nil {
		t.Fatal(err)
	}
	if got, err := Decode(b); err != nil || got.Fit.Baseline != "auto" {
		t.Errorf("read back %v, %v", got, err)
	}
}
