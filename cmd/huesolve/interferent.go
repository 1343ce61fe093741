package main

import (
	"fmt"
	"path/filepath"

	"huesolve/spectrum"
	"huesolve/unmix"
)

// readInterferents reads the --interferent files, one scan each, named by
// the file's base name (which must differ from file to file).
func readInterferents(files []string, q spectrum.Quantity, warn func(string)) ([]unmix.Interferent, error) {
	var out []unmix.Interferent
	seen := map[string]string{}
	for _, file := range files {
		ss, err := spectrum.ReadFile(file, spectrum.ReadOptions{Quantity: q, Warn: warn})
		if err != nil {
			return nil, fmt.Errorf("--interferent: %w", err)
		}
		if len(ss) != 1 {
			return nil, fmt.Errorf("--interferent: %s holds %d scans; give a file with one", file, len(ss))
		}
		name := filepath.Base(file)
		if prev, ok := seen[name]; ok {
			return nil, usagef("--interferent: %s and %s have the same name %q; rename one", prev, file, name)
		}
		seen[name] = file
		it, err := unmix.NewInterferent(ss[0], name)
		if err != nil {
			return nil, fmt.Errorf("--interferent %s: %w", file, err)
		}
		out = append(out, it)
	}
	return out, nil
}
