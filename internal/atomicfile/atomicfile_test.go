package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
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
