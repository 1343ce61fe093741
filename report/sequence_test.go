package report

import (
	"bytes"
	"strings"
	"testing"

	"huesolve/sequence"
)

// The drift table gives a slope to the decimal place of its SE and the SE
// to two significant figures (the lab section's rule, GUM JCGM 100:2008
// §7.2.6; cases worked by hand): 0.593441 ± 0.60213 reads 0.59 and 0.60,
// -0.0214461 ± 0.0071 reads -0.0214 and 0.0071; a line of two points has
// no SE and keeps five figures.
func TestDriftRounding(t *testing.T) {
	r := &sequence.Run{Timed: true, Drift: []sequence.Drift{
		{What: "recovery", Compound: "Corvane", Unit: "%", Per: "hour", N: 3, Slope: 0.593441, SE: 0.60213, HasSE: true},
		{What: "blank", Compound: "Corvane", Unit: "mg/L", Per: "hour", N: 4, Slope: -0.0214461, SE: 0.0071, HasSE: true},
		{What: "recovery", Compound: "Ambrelin", Unit: "%", Per: "hour", N: 2, Slope: 0.1386312},
	}}
	var b bytes.Buffer
	if err := writeDrift(&b, r); err != nil {
		t.Fatal(err)
	}
	rows := map[string][]string{}
	for _, l := range strings.Split(b.String(), "\n") {
		f := strings.Split(l, "│")
		if len(f) != 7 {
			continue
		}
		for i := range f {
			f[i] = strings.TrimSpace(f[i])
		}
		rows[f[1]+" "+f[2]] = f[3:6]
	}
	for key, want := range map[string][]string{
		"check recovery (%) Corvane":  {"0.59", "0.60", "3"},
		"blank (mg/L) Corvane":        {"-0.0214", "0.0071", "4"},
		"check recovery (%) Ambrelin": {"0.13863", "-", "2"},
	} {
		got := rows[key]
		if len(got) != 3 || got[0] != want[0] || got[1] != want[1] || got[2] != want[2] {
			t.Errorf("%s: %q, want %q\n%s", key, got, want, b.String())
		}
	}
}
