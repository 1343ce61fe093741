package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/internal/demo"
)

func TestDemoFilesOnly(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "case")
	out, errOut, code := run(t, "demo", "--files-only", dir)
	if code != exitOK {
		t.Fatalf("exit code %d, stderr %q", code, errOut)
	}
	if !strings.Contains(out, dir) {
		t.Errorf("output does not name the folder %s:\n%s", dir, out)
	}
	for _, f := range []string{demo.StandardsSheet, demo.ChecksSheet, demo.SampleSheet, demo.TruthFile} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Error(err)
		}
	}
	// A second run into the same folder is allowed: it holds a demo.
	if _, errOut, code := run(t, "demo", "--files-only", dir); code != exitOK {
		t.Fatalf("second run: exit code %d, stderr %q", code, errOut)
	}
}

func TestDemoRefusesForeignFolder(t *testing.T) {
	dir := t.TempDir()
	keep := filepath.Join(dir, "notes.txt")
	if err := os.WriteFile(keep, []byte("mine"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "demo", "--files-only", dir)
	if code != exitUsage {
		t.Fatalf("exit code %d, want %d (stderr %q)", code, exitUsage, errOut)
	}
	if !strings.Contains(errOut, "not empty") {
		t.Errorf("stderr %q does not say why", errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, demo.StandardsSheet)); err == nil {
		t.Error("files were written into a folder holding other files")
	}
}
