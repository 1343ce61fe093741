package sheet

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"huesolve/spectrum"
)

// TestOpen: a sheet file is read and its file information returned; a
// missing file names the kind of sheet; a folder and a file above the cap
// are refused with the same wording for every kind of sheet, the size
// from the file's size before reading, and wrap Options.Wrap when given.
func TestOpen(t *testing.T) {
	dir := t.TempDir()
	text := "sample,dilution\nA,2\nB,4\n"
	good := filepath.Join(dir, "good.csv")
	if err := os.WriteFile(good, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	opt := Options{What: "sample sheet", MaxBytes: 64}
	sh, st, err := Open(good, opt)
	if err != nil {
		t.Fatal(err)
	}
	again, err := os.Stat(good)
	if err != nil {
		t.Fatal(err)
	}
	if len(sh.Rows) != 2 || sh.File != good || !os.SameFile(st, again) {
		t.Errorf("good sheet: %d rows, file %q, same file %v", len(sh.Rows), sh.File, os.SameFile(st, again))
	}

	missing := filepath.Join(dir, "missing.csv")
	if _, _, err := Open(missing, opt); !errors.Is(err, fs.ErrNotExist) || !strings.HasPrefix(err.Error(), "sample sheet: open "+missing) {
		t.Errorf("missing: %v", err)
	}

	big := filepath.Join(dir, "big.csv")
	// Valid text up to the cap, so that only a check of the size made
	// before reading can say how large the file is.
	if err := os.WriteFile(big, []byte(text+strings.Repeat("C,3\n", 25)), 0o644); err != nil {
		t.Fatal(err)
	}
	badHeader := errors.New("bad header")
	for _, c := range []struct {
		name, path string
		opt        Options
		want       string
		is         error
	}{
		{"folder", dir, opt, dir + ": the sample sheet is a folder; give the sheet file", errFolder},
		{"folder wrapped", dir, Options{What: "standards sheet", Wrap: badHeader}, dir + ": bad header: the standards sheet is a folder; give the sheet file", errFolder},
		{"too large", big, opt, big + ": the file is 124 bytes, more than the 64 bytes a sample sheet may take (is it a sheet?)", errTooLarge},
		{"too large wrapped", big, Options{What: "standards sheet", MaxBytes: 64, Wrap: badHeader}, big + ": bad header: the file is 124 bytes, more than the 64 bytes a standards sheet may take", errTooLarge},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, st, err := Open(c.path, c.opt)
			if err == nil || !strings.HasPrefix(err.Error(), c.want) || st != nil {
				t.Fatalf("error %v, file information %v; want prefix %q", err, st, c.want)
			}
			var pe *spectrum.ParseError
			if !errors.As(err, &pe) || !errors.Is(err, c.is) {
				t.Errorf("%v: a %T, want a *spectrum.ParseError wrapping %v", err, err, c.is)
			}
			if c.opt.Wrap != nil && !errors.Is(err, c.opt.Wrap) {
				t.Errorf("%v does not wrap %v", err, c.opt.Wrap)
			}
		})
	}
}

// TestOpenPipe: a file whose size is not known beforehand (a named pipe)
// is read up to the cap: within it the sheet is read, past it the read
// fails with errTooLarge.
func TestOpenPipe(t *testing.T) {
	text := "sample,dilution\nA,2\n"
	for _, c := range []struct {
		name, text string
		ok         bool
	}{
		{"within the cap", text, true},
		{"past the cap", text + strings.Repeat("B,3\n", 100), false},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), "pipe")
			if err := syscall.Mkfifo(p, 0o600); err != nil {
				t.Skipf("no named pipes here: %v", err)
			}
			done := make(chan struct{})
			go func() {
				defer close(done)
				w, err := os.OpenFile(p, os.O_WRONLY, 0)
				if err != nil {
					return
				}
				_, _ = w.WriteString(c.text) // fails once the reader stops at the cap
				w.Close()
			}()
			sh, _, err := Open(p, Options{What: "sample sheet", MaxBytes: 64})
			// Should Open return without opening the pipe, a reader lets
			// the writer go on rather than wait for ever.
			if r, err := os.OpenFile(p, os.O_RDONLY|syscall.O_NONBLOCK, 0); err == nil {
				defer r.Close()
			}
			<-done
			switch {
			case c.ok && (err != nil || len(sh.Rows) != 1):
				t.Errorf("within the cap: %v", err)
			case !c.ok && (!errors.Is(err, errTooLarge) || !strings.HasPrefix(err.Error(), p+": more than the 64 bytes a sample sheet may take")):
				t.Errorf("past the cap: %v, want errTooLarge naming %s", err, p)
			}
		})
	}
}
