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
	"strings"
	"syscall"

	"huesolve/internal/pkgerr"
)

// warnTo returns the warning callback of a command: each message becomes
// one line "huesolve: warning: ..." on w.
func warnTo(w io.Writer) func(string) {
	return func(msg string) { fmt.Fprintln(w, "huesolve: warning:", msg) }
}

// noteTo returns a callback that prints information as
// "huesolve: note: ..." on w.
func noteTo(w io.Writer) func(string) {
	return func(msg string) { fmt.Fprintln(w, "huesolve: note:", msg) }
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
	return dropRepeats(msg)
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
