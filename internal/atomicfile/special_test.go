//go:build unix

package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// checkRefused writes to p, wants an error naming p and what, and wants
// p's type unchanged afterwards (it was not replaced by a regular file).
func checkRefused(t *testing.T, p, what string) {
	t.Helper()
	before, err := os.Lstat(p)
	if err != nil {
		t.Fatal(err)
	}
	called := false
	err = Write(p, func(w io.Writer) error {
		called = true
		_, err := io.WriteString(w, "data")
		return err
	})
	if err == nil || !strings.Contains(err.Error(), "cannot write "+p+": it is "+what+", not a regular file") {
		t.Fatalf("Write(%s) = %v, want it refused as %s", p, err, what)
	}
	if called {
		t.Error("fill ran for a path that is refused")
	}
	if cerr := Check(p); cerr == nil || cerr.Error() != err.Error() {
		t.Errorf("Check(%s) = %v, want the same refusal as Write", p, cerr)
	}
	after, err := os.Lstat(p)
	if err != nil {
		t.Fatal(err)
	}
	if after.Mode().Type() != before.Mode().Type() {
		t.Errorf("%s changed from %v to %v", p, before.Mode().Type(), after.Mode().Type())
	}
	ents, _ := os.ReadDir(filepath.Dir(p))
	for _, e := range ents {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("temporary file %s left behind", e.Name())
		}
	}
}

func TestWriteRefusesFIFO(t *testing.T) {
	p := filepath.Join(t.TempDir(), "pipe")
	if err := syscall.Mkfifo(p, 0o600); err != nil {
		t.Fatal(err)
	}
	checkRefused(t, p, "a named pipe (FIFO)")
}

func TestWriteRefusesDeviceNode(t *testing.T) {
	if os.Geteuid() != 0 {
		t.Skip("creating a device node needs root (CI runs as root)")
	}
	p := filepath.Join(t.TempDir(), "null")
	// A character device with the numbers of /dev/null (1, 3), made in
	// the test's own folder: no system device is touched.
	if err := syscall.Mknod(p, syscall.S_IFCHR|0o666, 1<<8|3); err != nil {
		if errors.Is(err, syscall.EPERM) {
			t.Skip("mknod refused (no CAP_MKNOD in this container):", err)
		}
		t.Fatal(err)
	}
	checkRefused(t, p, "a character device")
}

func TestWriteRefusesFolderAndSocket(t *testing.T) {
	dir := t.TempDir()
	sub := filepath.Join(dir, "sub")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	checkRefused(t, sub, "a folder")

	sock := filepath.Join(dir, "s")
	fd, err := syscall.Socket(syscall.AF_UNIX, syscall.SOCK_STREAM, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer syscall.Close(fd)
	if err := syscall.Bind(fd, &syscall.SockaddrUnix{Name: sock}); err != nil {
		t.Fatal(err)
	}
	checkRefused(t, sock, "a socket")
}

func TestWriteThroughSymlink(t *testing.T) {
	dir := t.TempDir()
	real := filepath.Join(dir, "data", "results.csv")
	if err := os.Mkdir(filepath.Dir(real), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(real, []byte("old"), 0o640); err != nil {
		t.Fatal(err)
	}
	if err := os.Chmod(real, 0o640); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "results.csv")
	if err := os.Symlink(filepath.Join("data", "results.csv"), link); err != nil {
		t.Fatal(err)
	}
	if err := WriteBytes(link, []byte("new")); err != nil {
		t.Fatal(err)
	}
	li, err := os.Lstat(link)
	if err != nil || li.Mode()&os.ModeSymlink == 0 {
		t.Fatalf("the link was replaced: %v %v", li, err)
	}
	got, _ := os.ReadFile(real)
	if string(got) != "new" {
		t.Errorf("target holds %q, want new", got)
	}
	fi, _ := os.Stat(real)
	if fi.Mode().Perm() != 0o640 {
		t.Errorf("target mode %v, want 0640 kept", fi.Mode().Perm())
	}
	ents, _ := os.ReadDir(filepath.Dir(real))
	if len(ents) != 1 {
		t.Errorf("target folder holds %d entries, want 1", len(ents))
	}
}

func TestWriteRefusesOddSymlinks(t *testing.T) {
	dir := t.TempDir()
	dangling := filepath.Join(dir, "dangling")
	if err := os.Symlink(filepath.Join(dir, "nothing"), dangling); err != nil {
		t.Fatal(err)
	}
	err := WriteBytes(dangling, []byte("x"))
	if err == nil || !strings.Contains(err.Error(), "symbolic link to "+filepath.Join(dir, "nothing")+", which does not exist") {
		t.Errorf("dangling link: err = %v", err)
	}
	if _, err := os.Lstat(filepath.Join(dir, "nothing")); !errors.Is(err, os.ErrNotExist) {
		t.Error("writing through a dangling link created its target")
	}

	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	toFIFO := filepath.Join(dir, "to-pipe")
	if err := os.Symlink(fifo, toFIFO); err != nil {
		t.Fatal(err)
	}
	checkRefused(t, toFIFO, "a symbolic link to a named pipe (FIFO)")
}

func TestWriteKeepsMode(t *testing.T) {
	p := filepath.Join(t.TempDir(), "secret.csv")
	if err := os.WriteFile(p, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	if err := WriteBytes(p, []byte("new")); err != nil {
		t.Fatal(err)
	}
	fi, _ := os.Stat(p)
	if fi.Mode().Perm() != 0o600 {
		t.Errorf("mode %v after replacing a 0600 file, want 0600", fi.Mode().Perm())
	}
}

func TestWriteNewFileUmask(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		umask int
		want  os.FileMode
	}{{0o022, 0o644}, {0o077, 0o600}, {0o002, 0o644}} {
		old := syscall.Umask(c.umask)
		p := filepath.Join(dir, "new.csv")
		err := WriteBytes(p, []byte("x"))
		syscall.Umask(old)
		if err != nil {
			t.Fatal(err)
		}
		fi, _ := os.Stat(p)
		if fi.Mode().Perm() != c.want {
			t.Errorf("umask %03o: new file mode %v, want %v", c.umask, fi.Mode().Perm(), c.want)
		}
		os.Remove(p)
	}
}
