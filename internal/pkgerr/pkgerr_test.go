package pkgerr

import (
	"errors"
	"fmt"
	"testing"
)

// custom is a package's own error type with a prefix in its text.
type custom struct{ err error }

func (c *custom) Error() string      { return "own: at 500 nm: " + c.err.Error() }
func (c *custom) Unwrap() error      { return c.err }
func (c *custom) Unprefixed() string { return "at 500 nm: " + c.err.Error() }

func TestPlain(t *testing.T) {
	sentinel := New("baseline", "invalid model")
	inner := Errorf("spectrum", "a.csv: %w", sentinel)
	cases := []struct {
		err        error
		text, want string
	}{
		{sentinel, "baseline: invalid model", "invalid model"},
		{inner, "spectrum: a.csv: baseline: invalid model", "a.csv: invalid model"},
		{fmt.Errorf("blank: %w", inner), "blank: spectrum: a.csv: baseline: invalid model", "blank: a.csv: invalid model"},
		{Errorf("reference", "build: %w", &custom{inner}), "reference: build: own: at 500 nm: spectrum: a.csv: baseline: invalid model",
			"build: at 500 nm: a.csv: invalid model"},
		{errors.Join(errors.New("first"), inner), "first\nspectrum: a.csv: baseline: invalid model", "first\na.csv: invalid model"},
		// An error that does not wrap keeps its words, prefix-like or not.
		{fmt.Errorf("spectrum: %v", errors.New("x")), "spectrum: x", "spectrum: x"},
		{nil, "", ""},
	}
	for _, c := range cases {
		if c.err != nil && c.err.Error() != c.text {
			t.Errorf("text %q, want %q", c.err.Error(), c.text)
		}
		if got := Plain(c.err); got != c.want {
			t.Errorf("Plain(%q) = %q, want %q", c.text, got, c.want)
		}
	}
	if !errors.Is(fmt.Errorf("x: %w", inner), sentinel) {
		t.Error("the sentinel is not found through Error")
	}
}
