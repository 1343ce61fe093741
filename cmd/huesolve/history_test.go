package main

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"huesolve/history"
)

// TestRecordAndHistory: five verify runs of one invented case whose
// declared concentrations differ slightly (recoveries about 100, 101,
// 99, 100 %) and then by 10 % (about 91 %) are recorded with a solve run;
// history lists them, breaks 1-3s on the last run for each series (the
// first four are the baseline) and exits 4, and its CSV holds every point.
func TestRecordAndHistory(t *testing.T) {
	db := filepath.Join(t.TempDir(), "qc.db")
	var refs, dir string
	for _, declare := range []float64{1, 1 / 1.01, 1 / 0.99, 1, 1 / 0.91} {
		var checks string
		dir, refs, checks = valCaseNoise(t, declare, quietCheckSD)
		out, errOut, code := run(t, "verify", refs, checks, "--record", db, "--format", "csv")
		if code != exitOK && code != exitFlagged || !strings.Contains(errOut, "recorded in "+db) {
			t.Fatalf("verify exit %d:\n%s\n%s", code, errOut, out)
		}
	}
	scans, _ := filepath.Glob(filepath.Join(dir, "chk-*.csv"))
	if _, errOut, code := run(t, append([]string{"solve", refs, "--record", db, "-o", filepath.Join(dir, "s.csv")}, scans...)...); code == exitFailure || code == exitUsage {
		t.Fatalf("solve exit %d:\n%s", code, errOut)
	}
	out, errOut, code := run(t, "history", db, "--baseline-runs", "4", "--plots", filepath.Join(dir, "charts"), "--plot-format", "svg")
	if code != exitFlagged {
		t.Fatalf("history exit %d, want 4:\n%s\n%s", code, errOut, out)
	}
	if !strings.Contains(out, "QC history "+db+": 6 run(s)") || !strings.Contains(out, "│ 6   │") ||
		!strings.Contains(out, "run 5 (") || !strings.Contains(out, ": 1-3s, out of control") {
		t.Errorf("history table:\n%s", out)
	}
	charts, _ := filepath.Glob(filepath.Join(dir, "charts", "control-*.svg"))
	if len(charts) == 0 {
		t.Errorf("no control charts written: %s", errOut)
	}
	out, _, _ = run(t, "history", db, "--format", "csv", "--baseline-runs", "4")
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(recs) < 6 || (len(recs)-1)%5 != 0 {
		t.Fatalf("CSV: %v, %d records:\n%s", err, len(recs), out)
	}
	for _, r := range recs[1:] {
		if r[2] == "5" && !strings.Contains(r[9], "1-3s") {
			t.Errorf("run 5 without 1-3s: %q", r)
		}
	}
}

// TestRecordDamagedFile: a --record file that is not a database fails the
// command with a message naming it, after the results were written; the
// file is left as it was.
func TestRecordDamagedFile(t *testing.T) {
	dir, refs, checks := valCaseNoise(t, 1, quietCheckSD)
	db := filepath.Join(dir, "qc.db")
	junk := bytes.Repeat([]byte("spreadsheet, not a database\n"), 200)
	if err := os.WriteFile(db, junk, 0o644); err != nil {
		t.Fatal(err)
	}
	res := filepath.Join(dir, "verify.csv")
	_, errOut, code := run(t, "verify", refs, checks, "--record", db, "--format", "csv", "-o", res)
	if code != exitFailure || !strings.Contains(errOut, db) || !strings.Contains(errOut, "the results are in "+res) {
		t.Errorf("exit %d, stderr:\n%s", code, errOut)
	}
	if fi, err := os.Stat(res); err != nil || fi.Size() == 0 {
		t.Errorf("results lost: %v", err)
	}
	if b, _ := os.ReadFile(db); !bytes.Equal(b, junk) {
		t.Error("the damaged history file was changed")
	}
	_, errOut, code = run(t, "history", db)
	if code != exitFailure || !strings.Contains(errOut, db) || !strings.Contains(errOut, "damaged") {
		t.Errorf("history of a damaged file: exit %d:\n%s", code, errOut)
	}
	_, errOut, code = run(t, "history", filepath.Join(dir, "none.db"))
	if code != exitFailure || !strings.Contains(errOut, "none.db does not exist") {
		t.Errorf("history of a missing file: exit %d:\n%s", code, errOut)
	}
}

// historyRuns counts the runs recorded in the history file path.
func historyRuns(t *testing.T, path string) int {
	t.Helper()
	db, err := history.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	n, _, _, err := db.Count(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	return n
}

// TestRecordBadHistoryFiles: the bad history files through the
// commands. A run that fails before recording leaves the file as it was;
// a file of a newer schema is refused by history and by --record, naming
// it and (for --record) saying where the results are, and is not changed.
func TestRecordBadHistoryFiles(t *testing.T) {
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	db := filepath.Join(dir, "qc.db")
	sheet := seqLabSheet(t, dir, "5")
	if _, errOut, code := run(t, "sequence", refs, sheet, "--record", db); code != exitOK {
		t.Fatalf("sequence: exit %d\n%s", code, errOut)
	}
	before, err := os.ReadFile(db)
	if err != nil {
		t.Fatal(err)
	}
	// A run that fails (its sheet has no check standard) records nothing.
	bad := filepath.Join(dir, "no-check.csv")
	if err := os.WriteFile(bad, []byte("order,role,scan,red (mg/L),yellow (mg/L)\n1,sample,chk-3.csv,,\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, errOut, code := run(t, "sequence", refs, bad, "--record", db); code != exitFailure || !strings.Contains(errOut, "no check standard") {
		t.Errorf("run without a check: exit %d\n%s", code, errOut)
	}
	if after, _ := os.ReadFile(db); !bytes.Equal(after, before) || historyRuns(t, db) != 1 {
		t.Error("a failed run changed the history file")
	}
	// A file from a newer huesolve.
	sdb, err := sql.Open("sqlite", db)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sdb.Exec(`UPDATE schema_version SET version = ?`, history.SchemaVersion()+1); err != nil {
		t.Fatal(err)
	}
	sdb.Close()
	newer, err := os.ReadFile(db)
	if err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "history", db)
	if code != exitFailure || !strings.Contains(errOut, db) || !strings.Contains(errOut, "newer") {
		t.Errorf("history of a newer file: exit %d\n%s", code, errOut)
	}
	out := filepath.Join(dir, "run.json")
	_, errOut, code = run(t, "sequence", refs, sheet, "--record", db, "-o", out)
	if code != exitFailure || !strings.Contains(errOut, db) || !strings.Contains(errOut, "newer") || !strings.Contains(errOut, "the results are in "+out) {
		t.Errorf("--record into a newer file: exit %d\n%s", code, errOut)
	}
	if fi, err := os.Stat(out); err != nil || fi.Size() == 0 {
		t.Errorf("results lost: %v", err)
	}
	if after, _ := os.ReadFile(db); !bytes.Equal(after, newer) {
		t.Error("the newer history file was changed")
	}
}

// TestRecordLockedFile: --record into a file another process holds
// locked waits for the busy timeout, then fails naming the file and where
// the results are; once the lock is gone the file holds what it held.
func TestRecordLockedFile(t *testing.T) {
	longEndToEnd(t) // waits history.BusyTimeout
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	db := filepath.Join(dir, "qc.db")
	sheet := seqLabSheet(t, dir, "5")
	if _, errOut, code := run(t, "sequence", refs, sheet, "--record", db); code != exitOK {
		t.Fatalf("sequence: exit %d\n%s", code, errOut)
	}
	sdb, err := sql.Open("sqlite", db)
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	conn, err := sdb.Conn(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	if _, err := conn.ExecContext(context.Background(), "BEGIN IMMEDIATE"); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "sequence", refs, sheet, "--record", db)
	if code != exitFailure || !strings.Contains(errOut, db+" is locked") || !strings.Contains(errOut, "the results are above") {
		t.Errorf("--record into a locked file: exit %d\n%s", code, errOut)
	}
	if _, err := conn.ExecContext(context.Background(), "ROLLBACK"); err != nil {
		t.Fatal(err)
	}
	if n := historyRuns(t, db); n != 1 {
		t.Errorf("%d runs after the locked attempt, want 1", n)
	}
}

// TestHistoryDamagedPage: a history file whose damage lies in a table the
// listing and the charts do not read (the runs' metadata) is still refused
// as damaged, naming the file, rather than charted as if sound: history
// runs SQLite's integrity check first.
func TestHistoryDamagedPage(t *testing.T) {
	db := filepath.Join(t.TempDir(), "qc.db")
	h, err := history.Open(db)
	if err != nil {
		t.Fatal(err)
	}
	pass := true
	for i := 0; i < 3; i++ { // invented runs, with metadata enough for pages of its own
		r := &history.Run{Kind: history.KindVerify, Time: time.Date(2026, 3, 2+i, 9, 0, 0, 0, time.UTC), ToolVersion: "test",
			CommandLine: "huesolve verify refs.json checks.csv", Reference: "refs.json", Pass: &pass,
			Meta:   map[string]string{"provenance": strings.Repeat("x", 5000)},
			Checks: []history.CheckResult{{Standard: "QC-1", Compound: "Ambrelin", Unit: "mg/L", Known: 5, Found: 5, Recovery: 100 + float64(i), Pass: true}}}
		if _, err := h.Record(context.Background(), r); err != nil {
			t.Fatal(err)
		}
	}
	h.Close()
	if _, errOut, code := run(t, "history", db); code != exitOK {
		t.Fatalf("history of a sound file: exit %d\n%s", code, errOut)
	}
	sdb, err := sql.Open("sqlite", db)
	if err != nil {
		t.Fatal(err)
	}
	var root, size int64
	err = sdb.QueryRow(`SELECT rootpage FROM sqlite_master WHERE name = 'run_meta'`).Scan(&root)
	if err == nil {
		err = sdb.QueryRow(`PRAGMA page_size`).Scan(&size)
	}
	sdb.Close()
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.OpenFile(db, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.WriteAt(bytes.Repeat([]byte{0xff}, int(size)), (root-1)*size); err != nil {
		t.Fatal(err)
	}
	f.Close()
	_, errOut, code := run(t, "history", db)
	if code != exitFailure || !strings.Contains(errOut, db) || !strings.Contains(errOut, "damaged") {
		t.Errorf("history of a file with a damaged page: exit %d\n%s", code, errOut)
	}
}

// TestRecordTwice: the same run recorded again (its files named from
// another folder) is recorded, with a warning naming the earlier run; a
// run with other inputs gets none.
func TestRecordTwice(t *testing.T) {
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	db := filepath.Join(dir, "qc.db")
	sheet := seqLabSheet(t, dir, "5")
	_, errOut, code := run(t, "sequence", refs, sheet, "--record", db)
	if code != exitOK || strings.Contains(errOut, "already holds") {
		t.Fatalf("first record: exit %d\n%s", code, errOut)
	}
	t.Chdir(dir)
	_, errOut, code = run(t, "sequence", filepath.Base(refs), filepath.Base(sheet), "--record", "qc.db")
	if code != exitOK || !strings.Contains(errOut, "warning: qc.db already holds this run: run 1 had the same reference set and inputs") {
		t.Errorf("second record: exit %d\n%s", code, errOut)
	}
	other := seqLabSheet(t, dir, "6")
	if _, errOut, _ = run(t, "sequence", refs, other, "--record", db); strings.Contains(errOut, "already holds") {
		t.Errorf("a run with another sheet warned:\n%s", errOut)
	}
	if n := historyRuns(t, db); n != 3 {
		t.Errorf("%d runs recorded, want 3", n)
	}
}
