package main

import (
	"strings"
	"testing"
)

// inspect shows the figures of merit after the summary.
func TestInspectShowsMerits(t *testing.T) {
	_, refs, _ := valCase(t, 1)
	out, errOut, code := run(t, "inspect", refs)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	low := strings.ToLower(out)
	for _, want := range []string{"figures of merit (net analyte signal) over 400-700 nm", "selectivity", "lod", "loq", "baseline offset"} {
		if !strings.Contains(low, want) {
			t.Errorf("inspect output lacks %q:\n%s", want, out)
		}
	}
}
