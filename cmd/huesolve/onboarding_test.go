package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// TestDemoCommandsRunAsPrinted: every "$ huesolve ..." line the demo
// prints runs as printed from inside the folder it names, also when that
// folder was written with --files-only (no results/ folder yet: -o and
// --plots create what they need).
func TestDemoCommandsRunAsPrinted(t *testing.T) {
	longEndToEnd(t)
	t.Chdir(t.TempDir())
	out, errOut, code := run(t, "demo", "full")
	if code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errOut)
	}
	if _, errOut, code := run(t, "demo", "--files-only", "fresh"); code != exitOK {
		t.Fatalf("demo --files-only: exit %d\n%s", code, errOut)
	}
	t.Chdir("fresh")
	ran := 0
	for _, l := range strings.Split(out, "\n") {
		rest, ok := strings.CutPrefix(l, "$ huesolve ")
		if !ok {
			continue
		}
		if _, errOut, code := run(t, strings.Fields(rest)...); code != exitOK && code != exitFlagged {
			t.Errorf("huesolve %s: exit %d\n%s", rest, code, errOut)
		}
		ran++
	}
	if ran < 8 {
		t.Errorf("ran %d printed command lines, want every step's", ran)
	}
}

// TestDemoSaysHowToInstall: when no huesolve is on the PATH the demo
// says how to get one before printing "$ huesolve ..." lines; with one
// on the PATH it says nothing of the kind.
func TestDemoSaysHowToInstall(t *testing.T) {
	longEndToEnd(t)
	bin := t.TempDir()
	t.Setenv("PATH", bin)
	out, errOut, code := run(t, "demo", filepath.Join(t.TempDir(), "a"))
	if code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errOut)
	}
	hint := strings.Index(out, "go install ./cmd/huesolve")
	if first := strings.Index(out, "$ huesolve "); hint < 0 || hint > first {
		t.Errorf("no install hint before the first command line:\n%.1500s", out)
	}
	if err := os.WriteFile(filepath.Join(bin, "huesolve"), []byte("#!/bin/sh\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	out, _, _ = run(t, "demo", filepath.Join(t.TempDir(), "b"))
	if strings.Contains(out, "not on your PATH") {
		t.Errorf("install hint with huesolve on the PATH:\n%.1500s", out)
	}
}

// TestReadmeFirstCommandsInstall: the README's first command runs the
// demo through go run from the source folder (into a temporary folder
// here), its second is the test command .ci/run gives, and the install
// command its next lines name gives a working huesolve (run here into a
// temporary GOBIN).
func TestReadmeFirstCommandsInstall(t *testing.T) {
	longEndToEnd(t)
	blocks := codeBlocks(readReadme(t), "sh")
	if len(blocks) < 2 {
		t.Fatal("README has fewer than two command lines")
	}
	first, second := commandPart(blocks[0].text), commandPart(blocks[1].text)
	args, ok := strings.CutPrefix(first, "go run ./cmd/huesolve demo ")
	if !ok || strings.Contains(args, " ") {
		t.Fatalf("README.md:%d: first command %q, want go run ./cmd/huesolve demo DIR", blocks[0].n, first)
	}
	if second != "go test ./..." {
		t.Fatalf("README.md:%d: second command %q, want go test ./...", blocks[1].n, second)
	}
	demo := exec.Command("go", "run", "./cmd/huesolve", "demo", filepath.Join(t.TempDir(), args))
	demo.Dir = "../.."
	if b, err := demo.CombinedOutput(); err != nil || !bytes.Contains(b, []byte("Step 1 of")) {
		t.Fatalf("%s: %v\n%.2000s", first, err, b)
	}
	const install = "go install ./cmd/huesolve"
	if data, err := os.ReadFile(readmePath); err != nil || !bytes.Contains(data, []byte("`"+install+"`")) {
		t.Fatalf("README does not say how to install: %q", install)
	}
	gobin := t.TempDir()
	cmd := exec.Command("go", "install", "./cmd/huesolve")
	cmd.Dir = "../.."
	cmd.Env = append(os.Environ(), "GOBIN="+gobin)
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("%s: %v\n%s", install, err, b)
	}
	if b, err := exec.Command(filepath.Join(gobin, "huesolve"), "version").CombinedOutput(); err != nil {
		t.Fatalf("installed huesolve version: %v\n%s", err, b)
	}
}

// commandPart is a README command line without its trailing comment.
func commandPart(line string) string {
	if i := strings.Index(line, "#"); i >= 0 {
		line = line[:i]
	}
	return strings.TrimSpace(line)
}

// longEndToEnd skips, under -short, a test that builds the tool, starts a
// browser or reads gigabyte files: one end-to-end pass that adds nothing
// under the race detector (.ci/run gives -race -short) but minutes of
// compiling and running. The plain `go test ./...` always runs it.
func longEndToEnd(t *testing.T) {
	t.Helper()
	if testing.Short() {
		t.Skip("long end-to-end test: run by go test ./... without -short")
	}
}
