package history

import (
	"bufio"
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// The test binary runs itself as a writer process when HISTORY_HELPER
// says so: "record N" records N runs; "hang" starts a transaction, writes
// a run's rows, says "inside" and waits to be killed.
func TestMain(m *testing.M) {
	if mode := os.Getenv("HISTORY_HELPER"); mode != "" {
		os.Exit(helper(mode, os.Getenv("HISTORY_FILE")))
	}
	os.Exit(m.Run())
}

func helper(mode, path string) int {
	d, err := Open(path)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	defer d.Close()
	ctx := context.Background()
	f := strings.Fields(mode)
	switch f[0] {
	case "record":
		n, _ := strconv.Atoi(f[1])
		for i := 0; i < n; i++ {
			if _, err := d.Record(ctx, testRun(i)); err != nil {
				fmt.Fprintln(os.Stderr, err)
				return 1
			}
		}
		return 0
	case "hang":
		// A page cache of a few pages and a run of some 400 kB: SQLite
		// spills the transaction's pages into the file before it is
		// killed, so the file itself is half written.
		if _, err := d.db.ExecContext(ctx, `PRAGMA cache_size = 2`); err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
		tx, err := d.db.BeginTx(ctx, nil)
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
		big := testRun(0)
		for i := 0; i < 100; i++ {
			big.Meta[fmt.Sprintf("bulk-%03d", i)] = strings.Repeat("x", 4000)
		}
		if _, err := d.insert(ctx, tx, big); err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
		fmt.Println("inside")
		time.Sleep(time.Minute)
		return 0
	}
	return 2
}

// testRun is an invented verify run with two check standards of two
// compounds and one sample.
func testRun(i int) *Run {
	pass := i%2 == 0
	r := &Run{Kind: KindVerify, Time: time.Date(2026, 3, 1, 9, 0, 0, 0, time.UTC).Add(time.Duration(i) * 24 * time.Hour),
		ToolVersion: "test", CommandLine: "huesolve verify dyes.json checks.csv --record qc.db", Reference: "dyes.json",
		ReferenceSHA256: strings.Repeat("ab", 32), Pass: &pass, Meta: map[string]string{"window": "400-700"},
		Inputs: []Input{{Path: "checks.csv", SHA256: strings.Repeat("cd", 32)}}}
	for _, std := range []string{"QC-1", "QC-2"} {
		for _, comp := range []string{"Ambrelin", "Corvane"} {
			r.Checks = append(r.Checks, CheckResult{Standard: std, Compound: comp, Unit: "mg/L", Known: 5, Found: 5 + 0.01*float64(i),
				SE: 0.02, Recovery: 100 + 0.2*float64(i), Pass: true})
		}
	}
	r.Samples = []SampleResult{{Sample: "S1", Source: "s1.csv", Compound: "Ambrelin", Unit: "mg/L", Conc: 3, SE: 0.1, LOD: 0.05, LOQ: math.NaN()}}
	return r
}

func counts(t *testing.T, path string) (runs, checks, samples int) {
	t.Helper()
	d, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	if err := d.Check(); err != nil {
		t.Fatal(err)
	}
	runs, checks, samples, err = d.Count(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	return runs, checks, samples
}

func TestRecordAndRead(t *testing.T) {
	path := filepath.Join(t.TempDir(), "qc.db")
	d, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	for i := 0; i < 3; i++ {
		if _, err := d.Record(ctx, testRun(i)); err != nil {
			t.Fatal(err)
		}
	}
	runs, err := d.Runs(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(runs) != 3 || runs[1].NChecks != 4 || runs[1].NSamples != 1 || *runs[1].Pass || !runs[1].Time.Equal(testRun(1).Time) {
		t.Fatalf("runs %+v", runs)
	}
	series, err := d.CheckSeries(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(series) != 4 || series[0].Compound != "Ambrelin" || series[0].Standard != "QC-1" || len(series[0].Points) != 3 ||
		series[0].Points[2].Recovery != 100.4 {
		t.Fatalf("series %+v", series)
	}
	if err := d.Close(); err != nil {
		t.Fatal(err)
	}
	// Reopening an up-to-date file changes nothing.
	if r, c, s := counts(t, path); r != 3 || c != 12 || s != 3 {
		t.Errorf("after reopening: %d runs, %d checks, %d samples; want 3, 12, 3", r, c, s)
	}
}

func TestNewerSchemaRefused(t *testing.T) {
	path := filepath.Join(t.TempDir(), "qc.db")
	d, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := d.db.Exec(`UPDATE schema_version SET version = ?`, SchemaVersion()+1); err != nil {
		t.Fatal(err)
	}
	d.Close()
	_, err = Open(path)
	if !errors.Is(err, ErrNewer) || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "schema version 2") {
		t.Errorf("got %v, want ErrNewer naming %s and its version", err, path)
	}
}

func TestDamagedFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "qc.db")
	if err := os.WriteFile(path, []byte(strings.Repeat("not a database\n", 300)), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Open(path)
	if !errors.Is(err, ErrDamaged) || !strings.Contains(err.Error(), path) {
		t.Errorf("got %v, want ErrDamaged naming %s", err, path)
	}
	if b, _ := os.ReadFile(path); !strings.HasPrefix(string(b), "not a database") {
		t.Error("the damaged file was changed")
	}
}

// TestLocked: a file whose write lock another connection holds is
// refused after the busy timeout with ErrLocked naming the file.
func TestLocked(t *testing.T) {
	if testing.Short() {
		t.Skip("waits for the busy timeout")
	}
	path := filepath.Join(t.TempDir(), "qc.db")
	d, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	tx, err := d.db.Begin()
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback()
	if _, err := tx.Exec(`INSERT INTO runs (kind, time_utc, tool_version, command_line, reference, reference_sha256) VALUES ('solve', '', '', '', '', '')`); err != nil {
		t.Fatal(err)
	}
	other, err := openWith(path, 200*time.Millisecond)
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	_, err = other.Record(context.Background(), testRun(0))
	if !errors.Is(err, ErrLocked) || !strings.Contains(err.Error(), path) {
		t.Errorf("got %v, want ErrLocked naming %s", err, path)
	}
}

// openWith opens path with its own busy timeout, for the lock test.
func openWith(path string, busy time.Duration) (*DB, error) {
	sdb, err := sql.Open("sqlite", fmt.Sprintf("%s?_txlock=immediate&_pragma=busy_timeout(%d)", path, busy.Milliseconds()))
	if err != nil {
		return nil, err
	}
	sdb.SetMaxOpenConns(1)
	return &DB{path: path, db: sdb}, nil
}

// TestConcurrentWriters: two processes record 25 runs each into one new
// file at once; every run is there afterwards and the file is sound.
func TestConcurrentWriters(t *testing.T) {
	path := filepath.Join(t.TempDir(), "qc.db")
	const each = 25
	var wg sync.WaitGroup
	errs := make([]error, 2)
	outs := make([][]byte, 2)
	for k := range errs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			cmd := exec.Command(os.Args[0], "-test.run=^$")
			cmd.Env = append(os.Environ(), "HISTORY_HELPER=record "+strconv.Itoa(each), "HISTORY_FILE="+path)
			outs[k], errs[k] = cmd.CombinedOutput()
		}()
	}
	wg.Wait()
	for k, err := range errs {
		if err != nil {
			t.Fatalf("writer %d: %v: %s", k, err, outs[k])
		}
	}
	if r, c, s := counts(t, path); r != 2*each || c != 2*each*4 || s != 2*each {
		t.Errorf("%d runs, %d checks, %d samples; want %d, %d, %d", r, c, s, 2*each, 2*each*4, 2*each)
	}
}

// TestKilledWriter: a process killed inside its transaction, after
// writing a run's rows and with some of its pages already in the file,
// leaves the file as it was once reopened (SQLite rolls the hot journal
// back): the integrity check passes and the rows recorded before are all
// there is.
func TestKilledWriter(t *testing.T) {
	path := filepath.Join(t.TempDir(), "qc.db")
	d, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 2; i++ {
		if _, err := d.Record(context.Background(), testRun(i)); err != nil {
			t.Fatal(err)
		}
	}
	d.Close()
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), "HISTORY_HELPER=hang", "HISTORY_FILE="+path)
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(out).ReadString('\n')
	if err != nil || line != "inside\n" {
		cmd.Process.Kill()
		cmd.Wait()
		t.Fatalf("writer said %q, %v", line, err)
	}
	if _, err := os.Stat(path + "-journal"); err != nil {
		t.Errorf("no rollback journal while the writer is inside its transaction: %v", err)
	}
	if mid, err := os.ReadFile(path); err != nil || bytes.Equal(mid, before) {
		t.Errorf("the file is as before while the writer is inside its transaction (%v): the kill would not test a half-written file", err)
	}
	if err := cmd.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	_ = cmd.Wait()
	if r, c, s := counts(t, path); r != 2 || c != 8 || s != 2 {
		t.Errorf("after the killed write: %d runs, %d checks, %d samples; want 2, 8, 2", r, c, s)
	}
	if _, err := os.Stat(path + "-journal"); err == nil {
		t.Error("the rollback journal is still there after reopening")
	}
}

// TestEarlier: a run recorded again with the same inputs (by SHA-256, not
// path) is found; one whose inputs or reference set differ is not.
func TestEarlier(t *testing.T) {
	d, err := Open(filepath.Join(t.TempDir(), "qc.db"))
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	ctx := context.Background()
	for i := 0; i < 3; i++ {
		r := testRun(i)
		r.Inputs = append(r.Inputs, Input{Path: fmt.Sprintf("day%d.csv", i), SHA256: strings.Repeat(strconv.Itoa(i), 64)})
		if _, err := d.Record(ctx, r); err != nil {
			t.Fatal(err)
		}
	}
	again := testRun(7)
	again.Inputs = []Input{{Path: "other/day1.csv", SHA256: strings.Repeat("1", 64)}, {Path: "elsewhere/checks.csv", SHA256: strings.Repeat("cd", 32)}}
	if id, err := d.Earlier(ctx, again); err != nil || id != 2 {
		t.Errorf("same inputs in another order and folder: run %d (%v), want 2", id, err)
	}
	again.ReferenceSHA256 = strings.Repeat("ef", 32)
	if id, err := d.Earlier(ctx, again); err != nil || id != 0 {
		t.Errorf("another reference set: run %d (%v), want 0", id, err)
	}
	again.ReferenceSHA256 = testRun(0).ReferenceSHA256
	again.Inputs = again.Inputs[:1]
	if id, err := d.Earlier(ctx, again); err != nil || id != 0 {
		t.Errorf("fewer inputs: run %d (%v), want 0", id, err)
	}
	again.Inputs = nil
	if id, err := d.Earlier(ctx, again); err != nil || id != 0 {
		t.Errorf("no inputs: run %d (%v), want 0", id, err)
	}
}
