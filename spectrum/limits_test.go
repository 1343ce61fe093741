package spectrum

import (
	"bufio"
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"
)

// endless yields prefix and then the byte fill for ever: a line of any
// length without writing it anywhere.
type endless struct {
	prefix string
	fill   byte
	read   int64
}

func (e *endless) Read(p []byte) (int, error) {
	n := copy(p, e.prefix)
	e.prefix = e.prefix[n:]
	for i := n; i < len(p); i++ {
		p[i] = e.fill
	}
	e.read += int64(len(p))
	return len(p), nil
}

// TestEndlessLine: a line that never ends stops at the default line limit
// with an error naming the line; the reader neither hangs nor reads on.
func TestEndlessLine(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 64 MiB")
	}
	for _, c := range []struct {
		name string
		read func(io.Reader) ([]*Spectrum, error)
	}{
		{"delimited", func(r io.Reader) ([]*Spectrum, error) { return ReadDelimited(r, "endless.csv", ReadOptions{}) }},
		{"jcamp", func(r io.Reader) ([]*Spectrum, error) { return ReadJCAMP(r, "endless.csv", ReadOptions{}) }},
	} {
		t.Run(c.name, func(t *testing.T) {
			src := &endless{prefix: "nm,A\n400,0.1\n401,", fill: '1'}
			if c.name == "jcamp" {
				src = &endless{prefix: "##TITLE=x\n##JCAMP-DX=4.24\n##DATA TYPE=UV/VIS SPECTRUM\n##XYDATA=(X++(Y..Y))\n400 ", fill: '2'}
			}
			_, err := c.read(src)
			var pe *ParseError
			if !errors.As(err, &pe) || pe.File != "endless.csv" || pe.Line == 0 || !strings.Contains(err.Error(), "longer than 67108864 bytes") {
				t.Fatalf("endless line: %v", err)
			}
			if src.read > 2*defaultMaxLineBytes {
				t.Errorf("read %d bytes before refusing a line longer than %d", src.read, defaultMaxLineBytes)
			}
		})
	}
}

// TestFileTooLarge: a file beyond MaxFileBytes is refused by its size,
// before a byte is read. The 5 GiB file is sparse: it takes no disk.
func TestFileTooLarge(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "huge.csv")
	if err := os.WriteFile(p, []byte("nm,A\n400,1\n401,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(p, 5<<30); err != nil {
		t.Skipf("cannot make a sparse file here: %v", err)
	}
	var before runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err := ReadFile(p, ReadOptions{})
	var after runtime.MemStats
	runtime.ReadMemStats(&after)
	if !errors.Is(err, errTooLarge) || !strings.Contains(err.Error(), p+": the file is 5 GiB, more than the 1 GiB") {
		t.Fatalf("5 GiB file: %v", err)
	}
	if grew := after.TotalAlloc - before.TotalAlloc; grew > 1<<20 {
		t.Errorf("refusing a 5 GiB file allocated %d bytes", grew)
	}
	// A smaller limit applies to a small file too.
	small := filepath.Join(dir, "small.csv")
	if err := os.WriteFile(small, []byte("nm,A\n400,1\n401,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadFile(small, ReadOptions{MaxFileBytes: 10}); !errors.Is(err, errTooLarge) || !strings.Contains(err.Error(), "small.csv: the file is 17 bytes, more than the 10 bytes") {
		t.Errorf("limit of 10 bytes: %v", err)
	}
	if ss, err := ReadFile(small, ReadOptions{MaxFileBytes: 17}); err != nil || len(ss) != 1 {
		t.Errorf("file at the limit: %v", err)
	}
}

// TestNotRegularRefused: a named pipe (with no writer: before, ReadFile
// waited for ever) and a device node are refused at once, naming the path
// and what it is. The device test needs root to make a node (CI runs as
// root); it makes its own node, a copy of /dev/null's numbers, in a
// temporary folder and never touches a system one.
func TestNotRegularRefused(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	cases := map[string]string{fifo: "a named pipe (FIFO)"}
	dev := filepath.Join(dir, "null")
	if err := syscall.Mknod(dev, syscall.S_IFCHR|0o600, 1<<8|3); err == nil {
		cases[dev] = "a character device"
	} else {
		t.Logf("no device node test (needs root): %v", err)
	}
	for p, kind := range cases {
		errc := make(chan error, 1)
		go func() {
			_, err := ReadFile(p, ReadOptions{})
			errc <- err
		}()
		select {
		case err := <-errc:
			if !errors.Is(err, ErrNotRegular) || !strings.Contains(err.Error(), p+" is "+kind+", not a regular file") {
				t.Errorf("%s: %v, want a refusal naming it %s", p, err, kind)
			}
		case <-time.After(10 * time.Second):
			t.Fatalf("ReadFile(%s) still blocks after 10 s", p)
		}
	}
}

// TestCapReader: the size cap holds while reading, for a file that grows
// after its size was looked at: a stream ending at the limit reads, one
// byte more fails with errTooLarge.
func TestCapReader(t *testing.T) {
	const content = "nm,A\n400,1\n401,2\n" // 17 bytes
	for _, c := range []struct {
		limit int64
		ok    bool
	}{{17, true}, {16, false}} {
		in := bufio.NewReader(&capReader{r: strings.NewReader(content), left: c.limit, limit: c.limit})
		ss, err := ReadDelimited(in, "grown.csv", ReadOptions{})
		if c.ok && (err != nil || len(ss) != 1) {
			t.Errorf("limit %d: %v", c.limit, err)
		}
		if !c.ok && !errors.Is(err, errTooLarge) {
			t.Errorf("limit %d: %v, want errTooLarge", c.limit, err)
		}
	}
}

// TestWideTable100k: a table of 100,000 scans reads, every column in its
// place; one column beyond the default limit is refused at line and
// column.
func TestWideTable100k(t *testing.T) {
	const n = 100000
	var b strings.Builder
	b.WriteString("nm")
	for range n {
		b.WriteString(",A")
	}
	for _, w := range []string{"\n400", "\n401", "\n402"} {
		b.WriteString(w)
		for j := range n {
			b.WriteString(",0.")
			b.WriteByte(byte('0' + j%10))
		}
	}
	ss, err := ReadDelimited(strings.NewReader(b.String()+"\n"), "wide.csv", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ss) != n || ss[n-1].Values[2] != float64((n-1)%10)/10 || ss[12345].Values[0] != 0.5 || ss[0].Quantity != Absorbance {
		t.Fatalf("%d spectra", len(ss))
	}
	var wide strings.Builder
	for range defaultMaxColumns + 1 {
		wide.WriteString("1,")
	}
	wide.WriteString("1\n")
	_, err = ReadDelimited(strings.NewReader(wide.String()), "wider.csv", ReadOptions{})
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 1 || pe.Column != defaultMaxColumns+1 || !strings.Contains(err.Error(), "more than the 1048576") {
		t.Errorf("too wide: %v", err)
	}
}

// TestReadFileContext: ReadFile stops with the context's error once it is
// done, so a large file stops at the first Ctrl-C (before, it was read
// to its end).
func TestReadFileContext(t *testing.T) {
	p := filepath.Join(t.TempDir(), "a.csv")
	if err := os.WriteFile(p, []byte("nm,A\n400,1\n401,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := ReadFile(p, ReadOptions{Context: ctx}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled read: %v, want context.Canceled", err)
	}
	if ss, err := ReadFile(p, ReadOptions{Context: context.Background()}); err != nil || len(ss) != 1 {
		t.Errorf("read: %v", err)
	}
}
