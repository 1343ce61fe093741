package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// seqSheet writes a run sheet into the folder of valCaseNoise's scans:
// blank, check, sample, check, sample, check, with the middle check
// declared at mid (5: its true composition, so it passes).
func seqSheet(t *testing.T, dir, mid string) string {
	t.Helper()
	text := "order,role,time,scan,red (mg/L),yellow (mg/L)\n" +
		"1,blank,08:00,chk-blank.csv,,\n" +
		"2,check,08:05,chk-1.csv,5,5\n" +
		"3,sample,08:10,chk-3.csv,,\n" +
		"4,check,08:15,chk-2.csv," + mid + ",5\n" +
		"5,sample,08:20,chk-4.csv,,\n" +
		"6,check,08:25,chk-1.csv,5,5\n" +
		"7,sample,08:30,chk-3.csv,,\n"
	p := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestSequenceEndToEnd(t *testing.T) {
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	sheet := seqSheet(t, dir, "5")
	out, errOut, code := run(t, "sequence", refs, sheet)
	// Sample 7 has no check after it: the run fails on it alone.
	if code != exitFlagged || !strings.HasPrefix(out, "Run FAIL: 3 checks (0 failed), 3 samples: 2 valid, 0 invalid, 1 unbracketed") {
		t.Fatalf("exit %d, stdout:\n%s\nstderr:\n%s", code, out, errOut)
	}
	if !strings.Contains(out, "UNBRACKETED (no check after)") || !strings.Contains(out, "valid (checks 2 and 4)") ||
		!strings.Contains(out, "Slope per hour") {
		t.Errorf("table:\n%s", out)
	}
	js := filepath.Join(dir, "run.json")
	if _, errOut, code = run(t, "sequence", refs, sheet, "--format", "json", "-o", js); code != exitFlagged {
		t.Fatalf("json: exit %d: %s", code, errOut)
	}
	var doc struct {
		Format string
		Run    struct{ Tool string }
		Seq    struct {
			Pass    bool
			Entries []struct{ Status string }
		} `json:"sequence"`
	}
	b, err := os.ReadFile(js)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &doc); err != nil || doc.Format != "huesolve-sequence" || doc.Run.Tool != "huesolve" ||
		doc.Seq.Pass || len(doc.Seq.Entries) != 7 || doc.Seq.Entries[2].Status != "valid" {
		t.Errorf("json %v: %+v", err, doc)
	}
	out, _, _ = run(t, "sequence", refs, sheet, "--format", "csv")
	if !strings.HasPrefix(out, "# format: huesolve-sequence\n") || !strings.Contains(out, "\nrecord,order,position,role,") ||
		!strings.Contains(out, "\ndrift,,,recovery,,,red,%,") {
		t.Errorf("csv:\n%s", out)
	}
	// Without the last sample, every sample is bracketed by passing checks.
	b, _ = os.ReadFile(sheet)
	trimmed := strings.TrimSuffix(string(b), "7,sample,08:30,chk-3.csv,,\n")
	if err := os.WriteFile(sheet, []byte(trimmed), 0o644); err != nil {
		t.Fatal(err)
	}
	db := filepath.Join(dir, "qc.db")
	out, errOut, code = run(t, "sequence", refs, sheet, "--record", db)
	if code != exitOK || !strings.HasPrefix(out, "Run PASS") || !strings.Contains(errOut, "run PASS") {
		t.Errorf("passing run: exit %d\n%s\n%s", code, out, errOut)
	}
	out, errOut, code = run(t, "history", db, "--format", "csv")
	if code != exitOK || strings.Count(out, "\nred,chk-") != 3 {
		t.Errorf("history of the recorded run: exit %d\n%s\n%s", code, out, errOut)
	}
}

// The middle check declared 10 % high fails, and exactly the samples
// between its neighbouring checks (3 and 5) are invalid.
func TestSequenceMiddleCheckFails(t *testing.T) {
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	sheet := seqSheet(t, dir, "5.5")
	out, errOut, code := run(t, "sequence", refs, sheet)
	if code != exitFlagged || !strings.Contains(errOut, "run FAIL: 3 checks (1 failed), 3 samples: 0 valid, 2 invalid, 1 unbracketed") {
		t.Fatalf("exit %d, stdout:\n%s\nstderr:\n%s", code, out, errOut)
	}
	if strings.Count(out, "INVALID (checks") != 2 || !strings.Contains(out, "FAIL: red") {
		t.Errorf("table:\n%s", out)
	}
}

func TestSequenceBadSheet(t *testing.T) {
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	p := filepath.Join(dir, "run.csv")
	for _, c := range []struct{ text, want string }{
		{"order,role,scan,red,yellow\n1,blank,chk-blank.csv,,\n2,sample,chk-3.csv,,\n", "run.csv: the run has no check standard"},
		{"order,role,scan,red,yellow\n1,check,chk-1.csv,5,5\n1,sample,chk-3.csv,,\n", "run.csv:3:1: order 1 is given twice"},
		{"order,role,scan,red,yellow\n1,check,chk-1.csv,5,5\n2,qc,chk-3.csv,,\n", `run.csv:3:2: unknown role "qc"`},
	} {
		if err := os.WriteFile(p, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		_, errOut, code := run(t, "sequence", refs, p)
		if code != exitFailure || !strings.Contains(errOut, c.want) {
			t.Errorf("exit %d, stderr %q, want %q", code, errOut, c.want)
		}
	}
}
