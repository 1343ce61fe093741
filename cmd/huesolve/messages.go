package main

// How huesolve talks on standard error: every line starts with
// "huesolve:"; warnings (something may be wrong with the input or the
// results) say "huesolve: warning:", information says "huesolve: note:".
// Errors from the libraries carry their package name as a prefix (the Go
// convention, useful in logs of programs that embed them); userMessage
// turns them into the line a chemist reads.

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"strconv"
	"strings"
	"syscall"
	"unicode/utf8"

	"huesolve/internal/pkgerr"
	"huesolve/reference"
)

// warnTo returns the warning callback of a command: each message becomes
// one line "huesolve: warning: ..." on w.
func warnTo(w io.Writer) func(string) {
	return func(msg string) { fmt.Fprintln(w, "huesolve: warning:", termLine(msg)) }
}

// noteTo returns a callback that prints information as
// "huesolve: note: ..." on w.
func noteTo(w io.Writer) func(string) {
	return func(msg string) { fmt.Fprintln(w, "huesolve: note:", termLine(msg)) }
}

// userMessage is err as one readable line: package prefixes of the
// libraries left out (pkgerr.Plain walks the chain of wrapped errors; no
// words are matched),
// the operating system's file errors said in plain words ("x.json does
// not exist" rather than "stat x.json: no such file or directory"), and a
// part repeated right after itself said once.
func userMessage(err error) string {
	msg := pkgerr.Plain(err)
	for e := err; e != nil; e = errors.Unwrap(e) {
		var pe *fs.PathError
		if !errors.As(e, &pe) {
			break
		}
		msg = strings.Replace(msg, pe.Error(), plainPathError(pe), 1)
		e = pe
	}
	return termLine(dropRepeats(msg))
}

// termLine is msg made safe for a terminal: a name read from a file may
// hold control characters (an ANSI escape sequence, a carriage return, a
// bidirectional override) that would move the cursor, recolour or
// rewrite what the user reads. Each such character (reference.TextFault's
// rule) is written as a Go escape (\x1b, \r, \u202e); bytes that are not
// UTF-8 as \xNN. Anything else is left as it is.
func termLine(msg string) string {
	if reference.TextFault(msg) == "" {
		return msg
	}
	var b strings.Builder
	for i := 0; i < len(msg); {
		r, size := utf8.DecodeRuneInString(msg[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			fmt.Fprintf(&b, "\\x%02x", msg[i])
		case reference.TextFault(string(r)) != "":
			q := strconv.QuoteRune(r)
			b.WriteString(q[1 : len(q)-1])
		default:
			b.WriteString(msg[i : i+size])
		}
		i += size
	}
	return b.String()
}

// plainPathError says what went wrong with a file in plain words.
func plainPathError(pe *fs.PathError) string {
	switch {
	case errors.Is(pe.Err, fs.ErrNotExist):
		return pe.Path + " does not exist"
	case errors.Is(pe.Err, fs.ErrPermission):
		return pe.Path + ": permission denied"
	case errors.Is(pe.Err, syscall.EISDIR):
		return pe.Path + " is a folder, not a file"
	case errors.Is(pe.Err, syscall.ENOTDIR):
		return pe.Path + ": part of the path is a file, not a folder"
	}
	return pe.Path + ": " + pe.Err.Error()
}

// dropRepeats says once a ": "-separated part that follows itself, as in
// "a.csv: a.csv: bad header".
func dropRepeats(msg string) string {
	parts := strings.Split(msg, ": ")
	out := parts[:1]
	for _, p := range parts[1:] {
		if p != out[len(out)-1] {
			out = append(out, p)
		}
	}
	return strings.Join(out, ": ")
}

// plural is one when n is 1, else many.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
