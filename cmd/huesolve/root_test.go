package main

import (
	"bytes"
	"strings"
	"testing"
)

// run executes huesolve in-process and returns stdout, stderr and the exit code.
func run(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	code := Execute(args, strings.NewReader(""), &out, &errb)
	return out.String(), errb.String(), code
}

func TestVersion(t *testing.T) {
	out, _, code := run(t, "version")
	if code != 0 || !strings.HasPrefix(out, "huesolve ") {
		t.Fatalf("version: code %d, out %q", code, out)
	}
}

func TestUnknownFlagIsUsageError(t *testing.T) {
	_, errOut, code := run(t, "--no-such-flag")
	if code != exitUsage {
		t.Fatalf("exit code = %d, want %d (stderr %q)", code, exitUsage, errOut)
	}
}
