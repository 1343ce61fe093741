package sheet

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

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

// TestOpenPipe: a named pipe is refused at once, with or without a
// writer, naming the path and the kind of sheet (before, Open waited for
// ever for a writer); a reader past the cap fails with errTooLarge (the
// cap holds while reading, for a file that grows).
func TestOpenPipe(t *testing.T) {
	for _, writer := range []bool{false, true} {
		p := filepath.Join(t.TempDir(), "pipe")
		if err := syscall.Mkfifo(p, 0o600); err != nil {
			t.Skipf("no named pipes here: %v", err)
		}
		if writer {
			// A writer blocks in its open until a reader comes; the
			// non-blocking reader below lets it go once Open is done.
			go func() {
				if w, err := os.OpenFile(p, os.O_WRONLY, 0); err == nil {
					_, _ = w.WriteString("sample,dilution\nA,2\n")
					w.Close()
				}
			}()
		}
		errc := make(chan error, 1)
		go func() {
			_, _, err := Open(p, Options{What: "sample sheet", MaxBytes: 64})
			errc <- err
		}()
		select {
		case err := <-errc:
			if !errors.Is(err, spectrum.ErrNotRegular) || !strings.HasPrefix(err.Error(), "sample sheet: "+p+" is a named pipe (FIFO), not a regular file") {
				t.Errorf("pipe (writer %v): %v, want a refusal naming %s", writer, err, p)
			}
		case <-time.After(pipeWait):
			t.Fatalf("Open of a named pipe (writer %v) still blocks after %v", writer, pipeWait)
		}
		if r, err := os.OpenFile(p, os.O_RDONLY|syscall.O_NONBLOCK, 0); err == nil {
			r.Close()
		}
	}
	_, err := Read(strings.NewReader("sample,dilution\nA,2\n"+strings.Repeat("B,3\n", 100)), "grown.csv", Options{What: "sample sheet", MaxBytes: 64})
	if !errors.Is(err, errTooLarge) || !strings.HasPrefix(err.Error(), "grown.csv: more than the 64 bytes a sample sheet may take") {
		t.Errorf("past the cap: %v, want errTooLarge naming grown.csv", err)
	}
}

// pipeWait is how long a test waits for a refusal that takes
// microseconds; only a hang (the bug it guards against) comes near it.
const pipeWait = 10 * time.Second
