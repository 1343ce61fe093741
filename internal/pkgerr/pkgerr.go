// Package pkgerr marks the package prefix of a library error, such as
// "spectrum: ", as data: the error's text keeps the Go convention (the
// prefix helps in the logs of a program that embeds the library), and a
// program talking to a person leaves the prefix out with Plain, by
// walking the chain of wrapped errors rather than by matching words.
package pkgerr

import (
	"errors"
	"fmt"
	"strings"
)

// prefixed is an error of package Pkg: its text is Pkg + ": " + Err's text.
// Pkg may name a step within the package as well ("calibration: build"),
// left out with it.
type prefixed struct {
	Pkg string
	Err error
}

func (e *prefixed) Error() string { return e.Pkg + ": " + e.Err.Error() }

func (e *prefixed) Unwrap() error { return e.Err }

// Unprefixed is the error's text without the package prefix.
func (e *prefixed) Unprefixed() string { return e.Err.Error() }

// New returns an error of package pkg with the given text.
func New(pkg, text string) error { return &prefixed{Pkg: pkg, Err: errors.New(text)} }

// Errorf returns an error of package pkg formatted as fmt.Errorf does
// (%w wraps).
func Errorf(pkg, format string, a ...any) error {
	return &prefixed{Pkg: pkg, Err: fmt.Errorf(format, a...)}
}

// unprefixer is an error that can say its text without its package
// prefix with a method Unprefixed() string. The errors of New and Errorf
// implement it; so may a package's own error types.
type unprefixer interface {
	error
	Unprefixed() string
}

// Plain returns err's text with the package prefix of every error in its
// chain that has a method Unprefixed() string left out. Wrapping errors that embed the
// text of what they wrap (as fmt.Errorf with %w does) carry the change
// outwards; an error that rewrites the text of what it wraps keeps it.
func Plain(err error) string {
	if err == nil {
		return ""
	}
	msg := err.Error()
	walk(err, func(u unprefixer) {
		msg = strings.Replace(msg, u.Error(), u.Unprefixed(), 1)
	})
	return msg
}

// walk calls f for each unprefixer in err's tree, outer ones first.
func walk(err error, f func(unprefixer)) {
	for err != nil {
		if u, ok := err.(unprefixer); ok {
			f(u)
		}
		switch w := err.(type) {
		case interface{ Unwrap() error }:
			err = w.Unwrap()
		case interface{ Unwrap() []error }:
			for _, e := range w.Unwrap() {
				walk(e, f)
			}
			return
		default:
			return
		}
	}
}
