package lab

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/internal/near"
	"huesolve/unmix"
)

func readSheet(t *testing.T, text string) (*Sheet, error) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "samples.csv")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	ss, err := unmix.ReadSampleSheet(path)
	if err != nil {
		t.Fatal(err)
	}
	return ReadSheet(ss)
}

func TestReadSheet(t *testing.T) {
	sh, err := readSheet(t, "sample,group,mass,mass_unit,u_mass,volume,volume_unit,u_volume\n"+
		"a1,A,2500,mg,1,50,mL,0.05\na2,A,2.5,g,,50,mL,\nb,,,,,,,\n")
	if err != nil {
		t.Fatal(err)
	}
	if !sh.Groups || sh.Rows["a1"].Group != "A" || sh.Rows["b"].Group != "" || sh.Rows["b"].Prep != nil {
		t.Fatalf("rows %+v", sh.Rows)
	}
	p := sh.Rows["a1"].Prep
	near.Rel(t, "mass", p.Mass, 2.5, 1e-15)
	near.Rel(t, "u(mass)", p.UMass, 0.001, 1e-15)
	near.Rel(t, "volume", p.Volume, 0.05, 1e-15)
	near.Rel(t, "u(volume)", p.UVolume, 5e-5, 1e-15)
}

func TestReadSheetErrors(t *testing.T) {
	head := "sample,mass,mass_unit,volume,volume_unit,u_mass\n"
	for _, c := range []struct{ name, row, want string }{
		{"mass 0", "s,0,g,50,mL,", `samples.csv:2:2: sample "s": mass "0" is not a positive number`},
		{"volume unit", "s,1,g,50,g,", `samples.csv:2:5: sample "s": volume unit "g" cannot be converted: want a volume unit`},
		{"mass unit", "s,1,mL,50,mL,", `samples.csv:2:3: sample "s": mass unit "mL" cannot be converted`},
		{"missing", "s,1,g,,mL,", `samples.csv:2:4: sample "s": volume is empty`},
		{"u alone", "s,,,,,0.1", `samples.csv:2:6: sample "s": u_mass given without mass and volume`},
		{"u negative", "s,1,g,50,mL,-1", `samples.csv:2:6: sample "s": u_mass "-1" is not a number >= 0`},
	} {
		_, err := readSheet(t, head+c.row+"\n")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err %v, want %q", c.name, err, c.want)
		}
	}
}

func TestReplicateOf(t *testing.T) {
	sh, err := readSheet(t, "sample,group,replicate_of\na,,\nb,,a\nc,K,\nd,,c\ne,,\n")
	if err != nil {
		t.Fatal(err)
	}
	for name, want := range map[string]string{"a": "a", "b": "a", "c": "K", "d": "K", "e": ""} {
		if got := sh.Rows[name].Group; got != want {
			t.Errorf("row %s: group %q, want %q", name, got, want)
		}
	}
	for _, c := range []struct{ rows, want string }{
		{"a,,\nb,,zz\n", `samples.csv:3:3: sample "b": replicate_of "zz" is not a sample of this sheet`},
		{"a,,\nb,G,a\n", `samples.csv:3:3: sample "b": give group or replicate_of, not both`},
		{"a,,\nb,,a\nc,,b\n", `samples.csv:4:3: sample "c": replicate_of "b", which is itself a replicate of "a"`},
		{"a,,a\n", `samples.csv:2:3: sample "a": replicate_of names the sample itself`},
	} {
		if _, err := readSheet(t, "sample,group,replicate_of\n"+c.rows); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: err %v, want %q", c.rows, err, c.want)
		}
	}
}

func TestEvaluate(t *testing.T) {
	sh, err := readSheet(t, "sample,group,mass,mass_unit,volume,volume_unit\n"+
		"r1,G,2.5,g,50,mL\nr2,G,2.5,g,50,mL\nr3,G,2.5,g,50,mL\nlone,,1,g,10,mL\n")
	if err != nil {
		t.Fatal(err)
	}
	scan := func(row string, c float64) Scan {
		return Scan{Sample: row, Source: row + ".csv", Row: row,
			Amounts: []Amount{{Compound: "dye", Unit: "mg/L", Conc: c, SE: 0.01, LOD: 0.1, LOQ: 0.3}}}
	}
	b, _ := ParseBasis("mg/kg")
	// 2.02, 2.06, 1.98 mg/L × 0.05 L / 2.5 g = 40.4, 41.2, 39.6 mg/kg:
	// mean 40.4, SD 0.8, RSD 1.980 % (the first example of TestStats × 4).
	s, err := Evaluate([]Scan{scan("r1", 2.02), scan("r2", 2.06), scan("r3", 1.98), scan("lone", 0.005)}, sh, Options{Basis: &b})
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Groups) != 1 || s.Groups[0].N != 3 || len(s.Reported) != 4 {
		t.Fatalf("groups %+v, reported %d", s.Groups, len(s.Reported))
	}
	g := s.Groups[0]
	near.Rel(t, "mean", g.Mean, 40.4, 1e-12)
	near.Rel(t, "sd", g.SD, 0.8, 1e-9)
	if len(g.Flags) != 0 || g.Reported != "40.40" {
		t.Errorf("group flags %v, reported %q; want none, 40.40 (SD 0.80 to two figures)", g.Flags, g.Reported)
	}
	if got := s.Reported[3].Text; got != "n.d. (< LOD 1.0)" {
		t.Errorf("lone: reported %q, want n.d. (< LOD 1.0)", got)
	}
	s, _ = Evaluate([]Scan{scan("r1", 2.02), scan("r2", 2.06), scan("r3", 1.98)}, sh, Options{Basis: &b, MaxRSD: 1.5})
	if f := s.Groups[0].Flags; len(f) != 1 || f[0] != FlagRepRSD {
		t.Errorf("RSD 1.98 %% over 1.5 %%: flags %v, want rep-rsd", f)
	}
	// Below the LOQ (0.3 mg/L, 6 mg/kg) precision is not judged: an RSD
	// of 100 % raises no flag.
	s, _ = Evaluate([]Scan{scan("r1", 0.01), scan("r2", 0.2), scan("r3", 0.05)}, sh, Options{Basis: &b})
	if g := s.Groups[0]; len(g.Flags) != 0 || !(g.RSD > 50) {
		t.Errorf("below the LOQ: RSD %g, flags %v; want over 50 %%, none", g.RSD, g.Flags)
	}
	if _, err := Evaluate([]Scan{{Sample: "x", Source: "x.csv", Amounts: scan("x", 1).Amounts}}, sh, Options{Basis: &b}); err == nil ||
		!strings.Contains(err.Error(), `sample "x" (x.csv) is not in the sample sheet`) {
		t.Errorf("scan not in the sheet: err %v", err)
	}
}
