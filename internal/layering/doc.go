// Package layering holds the test that keeps the project's import graph
// running downwards: it compares what `go list` reports with the table of
// allowed imports in DEVELOPERS.md (between the layering markers). The
// package has no code of its own.
package layering
