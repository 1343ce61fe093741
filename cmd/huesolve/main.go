// Command huesolve finds the concentrations of several coloured compounds
// in UV-Vis scans of their mixtures. See README.md.
package main

import (
	"os"
)

func main() {
	os.Exit(Execute(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}
