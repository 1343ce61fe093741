package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// rewriteChecks writes a copy of the checks sheet under header, each
// concentration multiplied by scale (red) and scale2 (yellow).
func rewriteChecks(t *testing.T, checks, name, header string, scale, scale2 float64) string {
	t.Helper()
	raw, err := os.ReadFile(checks)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	var b strings.Builder
	b.WriteString(header + "\n")
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		for i, s := range []float64{scale, scale2} {
			v, err := strconv.ParseFloat(f[i+1], 64)
			if err != nil {
				t.Fatal(err)
			}
			f[i+1] = strconv.FormatFloat(v*s, 'g', -1, 64)
		}
		b.WriteString(strings.Join(f, ",") + "\n")
	}
	p := filepath.Join(filepath.Dir(checks), name)
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// verifyRecoveries runs verify --format json and returns each compound's
// mean recovery and the unit conversions reported.
func verifyRecoveries(t *testing.T, refs, checks string) ([]float64, []string) {
	t.Helper()
	out, errOut, code := run(t, "verify", refs, checks, "--format", "json")
	if code != exitOK {
		t.Fatalf("%s: exit %d: %s", checks, code, errOut)
	}
	var rep struct {
		Verification struct {
			Compounds []struct {
				Unit            string
				MeanRecoveryPct float64 `json:"mean_recovery_pct"`
			}
			Converted []string `json:"unit_conversions"`
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	var rec []float64
	for _, c := range rep.Verification.Compounds {
		if c.Unit != "mg/L" {
			t.Errorf("%s: verdict in %q, want the set's mg/L", checks, c.Unit)
		}
		rec = append(rec, c.MeanRecoveryPct)
	}
	return rec, rep.Verification.Converted
}

// TestVerifyConvertsUnits: check standards given in µg/mL (either µ, or
// u), in µg/L or in µmol/L with a molar mass, against a set in mg/L, give
// the recoveries of the same checks in mg/L, and the report says what was
// converted. Before, any unit other than the set's text was refused
// ("gives red in µg/mL but the reference set in mg/L").
func TestVerifyConvertsUnits(t *testing.T) {
	dir, refs, checks := valCaseNoise(t, 1, quietCheckSD)
	want, conv := verifyRecoveries(t, refs, checks)
	if len(conv) != 0 {
		t.Errorf("mg/L checks: conversions %q", conv)
	}
	for _, c := range []struct {
		name, header  string
		scale, scale2 float64
		says          string
	}{
		// µg/mL is mg/L: the same numbers (SI prefixes; exact).
		{"ugml.csv", "scan,red [µg/mL],yellow (ug/mL)", 1, 1, "ugml.csv: red µg/mL to mg/L (× 1)"},
		{"mu.csv", "scan,red (\u03bcg/mL),yellow (mg/L)", 1, 1, "mu.csv: red \u03bcg/mL to mg/L (× 1)"},
		{"ugl.csv", "scan,red (µg/L),yellow (mg/L)", 1000, 1, "ugl.csv: red µg/L to mg/L (× 10^-3)"},
		// 5 mg/L of a dye of M = 500 g/mol is 5e-3/500 mol/L = 10 µmol/L
		// (mass concentration = amount concentration × molar mass;
		// common practice).
		{"molar.csv", "scan,red (µmol/L; M=500 g/mol),yellow [mg/L]", 2, 1, "molar.csv: red µmol/L to mg/L (× 500 g/mol × 10^-3)"},
	} {
		p := rewriteChecks(t, checks, c.name, c.header, c.scale, c.scale2)
		got, conv := verifyRecoveries(t, refs, p)
		for k := range want {
			if !scalar.EqualWithinRel(got[k], want[k], 1e-12) {
				t.Errorf("%s: mean recovery %v, want %v as in mg/L", c.name, got, want)
			}
		}
		if len(conv) == 0 || !strings.Contains(conv[0], c.says) {
			t.Errorf("%s: conversions %q, want %q", c.name, conv, c.says)
		}
	}
	// The table says it too.
	p := filepath.Join(dir, "ugml.csv")
	out, errOut, code := run(t, "verify", refs, p)
	if code != exitOK || !strings.Contains(out, "Unit converted to the reference set's: "+p+": red µg/mL to mg/L (× 1).") {
		t.Errorf("table: exit %d, stderr %s\n%s", code, errOut, out)
	}
}

// TestVerifyRefusesUnits: a molar unit without a molar mass, and a unit
// of no known kind, are refused naming the file, the column and the fix.
func TestVerifyRefusesUnits(t *testing.T) {
	_, refs, checks := valCaseNoise(t, 1, quietCheckSD)
	for _, c := range []struct {
		name, header string
		says         []string
	}{
		{"molar.csv", "scan,red (mg/L),yellow (µmol/L)", []string{"molar.csv, column 3: yellow is given in µmol/L but the reference set holds it in mg/L", "molar mass"}},
		{"kg.csv", "scan,red (mg/kg),yellow (mg/L)", []string{"kg.csv, column 2: red is given in mg/kg", "write the column in mg/L"}},
	} {
		p := rewriteChecks(t, checks, c.name, c.header, 1, 1)
		_, errOut, code := run(t, "verify", refs, p)
		if code != exitFailure {
			t.Errorf("%s: exit %d, want %d", c.name, code, exitFailure)
		}
		for _, s := range c.says {
			if !strings.Contains(errOut, s) {
				t.Errorf("%s: stderr %q does not say %q", c.name, errOut, s)
			}
		}
	}
}
