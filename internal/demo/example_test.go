package demo_test

import (
	"fmt"

	"huesolve/internal/demo"
)

// The scenario holds its dyes, standards, checks and samples with the
// concentrations it put in.
func Example() {
	sc := demo.New()
	for _, d := range sc.Dyes {
		fmt.Printf("%-9s %-6s levels %v mg/L\n", d.Name, d.Colour, d.Levels)
	}
	fmt.Println(len(sc.Standards), "standards,", len(sc.Checks), "check scans,", len(sc.Samples), "samples")
	s := sc.Sample("lot-104")
	fmt.Printf("%s: %v mg/L, diluted %gx (%s)\n", s.Name, s.Conc, s.Dilution, s.Note)
	// Output:
	// Ambrelin  yellow levels [2 4 8 12 16 20] mg/L
	// Corvasine orange levels [2 4 8 12 16 20] mg/L
	// Scarlane  red    levels [2 4 8 12 16 20] mg/L
	// Tidelin   blue   levels [0.5 1 2 3 4 5] mg/L
	// 52 standards, 7 check scans, 14 samples
	// lot-104: [18 0 0 3.6] mg/L, diluted 2x (lime; diluted 1+1 before scanning)
}
