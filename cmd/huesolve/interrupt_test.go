package main

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
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
