package reference

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"

	"huesolve/spectrum"
)

// FileSHA256 returns the SHA-256 of a file's content in lower-case hex,
// reading it in pieces (memory does not grow with the file). These are
// the scan-file hashes a set records in its provenance (Standard.SHA256,
// Provenance.BlankSHA256), so the function lives with the format that
// stores them, below both of its callers: package calibration (the
// standards' scans) and the command (a separate blank).
func FileSHA256(path string) (string, error) {
	f, st, err := spectrum.OpenInput(path)
	if err != nil {
		return "", err
	}
	if st.IsDir() {
		f.Close()
		return "", fmt.Errorf("%s is a folder", path)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("%s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}
