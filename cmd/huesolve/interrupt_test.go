package main

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// countdownCtx is a context that reports itself cancelled from the n+1-th
// time Err is asked, as if Ctrl-C came part way through.
type countdownCtx struct {
	context.Context
	n int
}

func (c *countdownCtx) Err() error {
	if c.n--; c.n < 0 {
		return context.Canceled
	}
	return nil
}

// TestVerifyInterrupted: verify stopped part way (as on Ctrl-C) exits
// 130, says how far it got, and writes nothing, not even a temporary file.
func TestVerifyInterrupted(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	std := filepath.Join(dir, "standards.csv")
	for _, c := range []struct {
		name string
		n    int
		args []string
		says string
	}{
		{"before any", 0, nil, "stopped after 0 of 4 check standards"},
		{"part way", 2, nil, "stopped after 2 of 4 check standards"},
		{"in cross-validation", 4 + 3, []string{"--crossval", std}, "cross-validation stopped after 3 of 10 folds"},
	} {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "v.json")
			root := newRootCmd()
			var stdout, stderr bytes.Buffer
			root.SetArgs(append([]string{"verify", refs, checks, "--format", "json", "-o", out}, c.args...))
			root.SetOut(&stdout)
			root.SetErr(&stderr)
			err := root.ExecuteContext(&countdownCtx{Context: context.Background(), n: c.n})
			var ee *exitError
			if !errors.As(err, &ee) || ee.code != exitInterrupt || !strings.Contains(ee.msg, c.says) || !strings.Contains(ee.msg, "nothing written to "+out) {
				t.Fatalf("interrupted verify: %v", err)
			}
			ents, _ := os.ReadDir(filepath.Dir(out))
			if len(ents) != 0 || stdout.Len() != 0 {
				t.Errorf("an interrupted verify left %d files and printed %q", len(ents), stdout.String())
			}
		})
	}
}

// TestWindowInterrupted: window stopped part way through its search (as
// on Ctrl-C) exits 130, says how far it got and writes nothing (before,
// it ignored Ctrl-C and finished the search).
func TestWindowInterrupted(t *testing.T) {
	_, refs, _ := valCase(t, 1)
	out := filepath.Join(t.TempDir(), "w.csv")
	root := newRootCmd()
	var stdout, stderr bytes.Buffer
	root.SetArgs([]string{"window", refs, "--format", "csv", "-o", out})
	root.SetOut(&stdout)
	root.SetErr(&stderr)
	err := root.ExecuteContext(&countdownCtx{Context: context.Background(), n: 50})
	var ee *exitError
	if !errors.As(err, &ee) || ee.code != exitInterrupt || !strings.Contains(ee.msg, "window search stopped after ") || !strings.Contains(ee.msg, "nothing written to "+out) {
		t.Fatalf("interrupted window: %v", err)
	}
	if ents, _ := os.ReadDir(filepath.Dir(out)); len(ents) != 0 || stdout.Len() != 0 {
		t.Errorf("an interrupted window left %d files and printed %q", len(ents), stdout.String())
	}
}

// TestSignalExitCodes: a command its context stops exits 130 when SIGINT
// (Ctrl-C) stopped it and 143 for SIGTERM, as shells report a command a
// signal ended (before, both gave 130); the output file is not written.
func TestSignalExitCodes(t *testing.T) {
	_, refs, _ := valCase(t, 1)
	for _, c := range []struct {
		sig  os.Signal
		code int
	}{{os.Interrupt, 130}, {syscall.SIGTERM, 143}} {
		out := filepath.Join(t.TempDir(), "w.csv")
		ctx, cancel := context.WithCancelCause(context.Background())
		cancel(&signalCause{sig: c.sig})
		var stdout, stderr bytes.Buffer
		code := execute(ctx, []string{"window", refs, "--format", "csv", "-o", out}, strings.NewReader(""), &stdout, &stderr)
		if code != c.code || !strings.Contains(stderr.String(), "huesolve: interrupted") {
			t.Errorf("%v: exit %d, stderr %q; want %d", c.sig, code, stderr.String(), c.code)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v: %s written", c.sig, out)
		}
	}
}

// TestWindowStepBounded: a --step finer than the reference set's grid is
// a bad command line naming both (before, --step 0.001 ran for hours).
func TestWindowStepBounded(t *testing.T) {
	_, refs, _ := valCase(t, 1)
	_, errOut, code := run(t, "window", refs, "--step", "0.5")
	if code != exitUsage || !strings.Contains(errOut, "--step 0.5: finer than the reference set's grid spacing of 2 nm") {
		t.Errorf("exit %d, stderr %q; want exit 2 naming the step and the grid spacing", code, errOut)
	}
	_, errOut, code = run(t, "window", refs, "--step", "2", "--min-width", "2")
	if code != exitOK {
		t.Errorf("step at the grid spacing: exit %d, %s", code, errOut)
	}
}

// TestLookInterrupted: look stops at the first signal, also inside a
// file (ReadOptions.Context), exiting 143 for SIGTERM and printing no
// listing (before, it read every file to its end).
func TestLookInterrupted(t *testing.T) {
	dir := t.TempDir()
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 1, 8}, 0, 1))
	ctx, cancel := context.WithCancelCause(context.Background())
	cancel(&signalCause{sig: syscall.SIGTERM})
	var stdout, stderr bytes.Buffer
	code := execute(ctx, []string{"look", scan, scan}, strings.NewReader(""), &stdout, &stderr)
	if code != exitTerminated || stdout.Len() != 0 || !strings.Contains(stderr.String(), "interrupted while reading "+scan+", after 0 of 2 files") {
		t.Errorf("exit %d, stdout %q, stderr %q", code, stdout.String(), stderr.String())
	}
}
