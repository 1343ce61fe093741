package method

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"path/filepath"

	"huesolve/internal/pkgerr"
	"huesolve/reference"
)

// Interferent is a scan the fit takes as an interferent (solve and
// verify --interferent): Path relative to the method file's folder
// (unless absolute), SHA256 the SHA-256 of its bytes when the method was
// saved; a file that no longer has it is refused.
type Interferent struct {
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
}

// validateInterferents checks the method's interferents: a path and a
// SHA-256 in hex each.
func (f *Fit) validateInterferents() error {
	for i, it := range f.Interferents {
		if it.Path == "" {
			return fmt.Errorf("%w: fit.interferents[%d].path is empty", ErrInvalid, i)
		}
		if b, err := hex.DecodeString(it.SHA256); err != nil || len(b) != sha256.Size {
			return fmt.Errorf("%w: fit.interferents[%d].sha256 %q is not a SHA-256 in hex", ErrInvalid, i, it.SHA256)
		}
	}
	return nil
}

// InterferentPaths returns the method's interferent files for a method
// read from methodPath (relative paths taken from its folder), each
// checked against the SHA-256 the method recorded: a file changed since
// is refused naming it.
func (m *Method) InterferentPaths(methodPath string) ([]string, error) {
	var out []string
	for _, it := range m.Fit.Interferents {
		p := filepath.FromSlash(it.Path)
		if !filepath.IsAbs(p) {
			p = filepath.Join(filepath.Dir(methodPath), p)
		}
		sum, err := reference.FileSHA256(p)
		if err != nil {
			return nil, pkgerr.Errorf("method", "%s: interferent: %w", methodPath, err)
		}
		if sum != it.SHA256 {
			return nil, pkgerr.Errorf("method", "%s: the interferent %s has changed since the method was saved (SHA-256 %.12s..., the method records %.12s...): restore it, or give --interferent and save the method again", methodPath, p, sum, it.SHA256)
		}
		out = append(out, p)
	}
	return out, nil
}
