package main

import (
	"strings"
	"testing"
)

// TestMeritsTablePrintedOnce: the figures-of-merit table is printed once
// per design: inspect prints it for the whole grid; verify with the same
// design points there in one line and prints its own only for another
// design (here a narrower window); window's table leaves it to them
// (its JSON keeps it).
func TestMeritsTablePrintedOnce(t *testing.T) {
	_, refs, checks := valCase(t, 1)
	const table = "Sensitivity ("
	out, errOut, code := run(t, "inspect", refs)
	if code != exitOK || strings.Count(out, table) != 1 {
		t.Fatalf("inspect: exit %d, %d merits tables\n%s%s", code, strings.Count(out, table), out, errOut)
	}
	out, errOut, code = run(t, "verify", refs, checks, "--baseline", "offset")
	if code != exitOK && code != exitFlagged {
		t.Fatalf("verify: exit %d\n%s", code, errOut)
	}
	if strings.Contains(out, table) || !strings.Contains(out, "as huesolve inspect "+refs+" shows them") {
		t.Errorf("verify with inspect's design: want one line pointing to inspect, not the table again:\n%s", out)
	}
	out, errOut, code = run(t, "verify", refs, checks, "--window", "420-680")
	if code != exitOK && code != exitFlagged {
		t.Fatalf("verify --window: exit %d\n%s", code, errOut)
	}
	if strings.Count(out, table) != 1 || !strings.Contains(out, "over 420-680 nm") {
		t.Errorf("verify with its own window: want its figures of merit:\n%s", out)
	}
	out, errOut, code = run(t, "window", refs)
	if code != exitOK {
		t.Fatalf("window: exit %d\n%s", code, errOut)
	}
	if strings.Contains(out, table) || !strings.Contains(out, "verify --window") {
		t.Errorf("window: want no merits table and a pointer to verify:\n%s", out)
	}
	out, _, _ = run(t, "window", refs, "--format", "json")
	if !strings.Contains(out, `"figures_of_merit"`) {
		t.Errorf("window JSON lost its figures of merit")
	}
}
