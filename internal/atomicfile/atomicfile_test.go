package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestWriteReplacesOnSuccess(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.csv")
	if err := WriteBytes(p, []byte("old")); err != nil {
		t.Fatal(err)
	}
	if err := WriteBytes(p, []byte("new")); err != nil {
		t.Fatal(err)
	}
	got, _ := os.ReadFile(p)
	if string(got) != "new" {
		t.Fatalf("content = %q, want %q", got, "new")
	}
}

func TestWriteKeepsOldOnFailure(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.csv")
	if err := WriteBytes(p, []byte("old")); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := Write(p, func(w io.Writer) error {
		io.WriteString(w, "half")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("err = %v, want wrapping boom", err)
	}
	got, _ := os.ReadFile(p)
	if string(got) != "old" {
		t.Fatalf("content = %q, want old content kept", got)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Fatalf("directory holds %d entries, want only the target (temporary file left behind)", len(ents))
	}
}

// TestWriteMakesMissingFolders: missing folders on the way are created
// (as --plots creates its folder); a failed write removes the folders it
// made and leaves those that were there.
func TestWriteMakesMissingFolders(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out", "today", "refs.json")
	if err := WriteBytes(p, []byte("x")); err != nil {
		t.Fatalf("writing into missing folders: %v", err)
	}
	if got, err := os.ReadFile(p); err != nil || string(got) != "x" {
		t.Fatalf("read back %q, %v", got, err)
	}
	boom := errors.New("boom")
	failed := filepath.Join(dir, "out", "new", "deeper", "x.csv")
	err := Write(failed, func(io.Writer) error { return boom })
	if !errors.Is(err, boom) {
		t.Fatalf("err = %v, want boom", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "out", "new")); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("a failed write left the folders it made: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "out", "today", "refs.json")); err != nil {
		t.Errorf("a failed write removed what was there: %v", err)
	}
}

func TestWriteIntoFileAsFolder(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "plain")
	if err := WriteBytes(f, []byte("x")); err != nil {
		t.Fatal(err)
	}
	err := WriteBytes(filepath.Join(f, "out.csv"), []byte("y"))
	if err == nil || !strings.Contains(err.Error(), f+" is a file, not a folder") {
		t.Fatalf("err = %v, want it to say %s is a file", err, f)
	}
	err = WriteBytes(filepath.Join(f, "sub", "out.csv"), []byte("y"))
	if err == nil || !strings.Contains(err.Error(), f+" is a file, not a folder") {
		t.Fatalf("deeper: err = %v, want it to say %s is a file", err, f)
	}
}

func TestHideTempKeepsCause(t *testing.T) {
	name := "/x/.out.csv.tmp-123"
	base := &fs.PathError{Op: "write", Path: name, Err: errors.New("no space left on device")}
	err := hideTemp(fmt.Errorf("report: table: %w", base), name)
	if err.Error() != "report: table: no space left on device" {
		t.Errorf("hideTemp = %q", err)
	}
	var pe *fs.PathError
	if !errors.As(err, &pe) {
		t.Error("hideTemp lost the *fs.PathError for errors.As")
	}
}
