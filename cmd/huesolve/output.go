package main

// Output safety shared by every command: standard output whose write
// errors are remembered and turned into exit code 1 (checkedWriter), and
// the test of an -o value (checkOutput) made before any work is done.

import (
	"errors"
	"io"
	"io/fs"
	"os"
	"strings"
	"sync"

	"huesolve/internal/atomicfile"
	"huesolve/internal/pkgerr"
)

// stdoutName is the -o value that means standard output, for every
// command that takes -o.
const stdoutName = "-"

// toStdout reports whether the -o value out means standard output: none
// given, or "-".
func toStdout(out string) bool { return out == "" || out == stdoutName }

// checkedWriter is the standard output every command writes to. It
// remembers the first write error (a full disk, a closed pipe) and fails
// every later write with it, so that Execute can end the command with
// exit code 1 and a message however the command wrote (a report
// function, fmt.Fprintln, cobra's help), and nothing is written after a
// gap. It is safe for concurrent use.
type checkedWriter struct {
	mu  sync.Mutex
	w   io.Writer
	err error
}

func (c *checkedWriter) Write(p []byte) (int, error) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(p)
	if err == nil && n < len(p) {
		err = io.ErrShortWrite
	}
	if err != nil {
		c.err = &stdoutError{err}
		return n, c.err
	}
	return n, nil
}

// failed returns the first write error (nil when every write succeeded).
func (c *checkedWriter) failed() error {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.err
}

// stdoutError is a failed write to standard output, said in plain words:
// "cannot write to standard output: no space left on device".
type stdoutError struct{ err error }

func (e *stdoutError) Error() string {
	cause := e.err
	var pe *fs.PathError
	if errors.As(cause, &pe) {
		cause = pe.Err // "write /dev/stdout: ..." names no file the user gave
	}
	return "cannot write to standard output: " + cause.Error()
}

func (e *stdoutError) Unwrap() error { return e.err }

// asFile returns the file under w (through checkedWriter), to ask
// whether it is a terminal and how wide.
func asFile(w io.Writer) (*os.File, bool) {
	for {
		switch v := w.(type) {
		case *os.File:
			return v, true
		case *checkedWriter:
			w = v.w
		default:
			return nil, false
		}
	}
}

// checkOutput refuses, as a usage error, an -o value that atomicfile
// would refuse: a folder, device, named pipe or socket, or a symbolic
// link to anything but a regular file. flag names the option; "" and "-"
// (standard output) pass.
func checkOutput(flag, out string) error {
	if toStdout(out) {
		return nil
	}
	if err := atomicfile.Check(out); err != nil {
		why := strings.TrimPrefix(pkgerr.Plain(err), "cannot write "+out+": ")
		return usagef("%s %s: %s; give a regular file, or - for standard output", flag, out, why)
	}
	return nil
}
