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

// seqLabSheet writes a run sheet whose samples are two replicate groups,
// each member prepared as 2.5 g made up to 50 mL: A between checks 2 and
// 5, B on either side of check 7 (declared at mid for red).
func seqLabSheet(t *testing.T, dir, mid string) string {
	t.Helper()
	text := "order,role,scan,red (mg/L),yellow (mg/L),sample,group,mass,mass_unit,volume,volume_unit\n" +
		"1,blank,chk-blank.csv,,,,,,,,\n" +
		"2,check,chk-1.csv,5,5,,,,,,\n" +
		"3,sample,chk-3.csv,,,A-1,A,2.5,g,50,mL\n" +
		"4,sample,chk-3.csv,,,A-2,A,2.5,g,50,mL\n" +
		"5,check,chk-1.csv,5,5,,,,,,\n" +
		"6,sample,chk-4.csv,,,B-1,B,2.5,g,50,mL\n" +
		"7,check,chk-2.csv," + mid + ",5,,,,,,\n" +
		"8,sample,chk-4.csv,,,B-2,B,2.5,g,50,mL\n" +
		"9,check,chk-1.csv,5,5,,,,,,\n"
	p := filepath.Join(dir, "run-lab.csv")
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// A run of replicate samples prepared by weight, reported in mg/kg:
// the table, CSV and JSON carry the lab section with each sample's and
// group's status; a failed middle check invalidates group B only.
func TestSequenceReplicatesOnBasis(t *testing.T) {
	dir, refs, _ := valCaseNoise(t, 1, quietCheckSD)
	sheet := seqLabSheet(t, dir, "5")
	out, errOut, code := run(t, "sequence", refs, sheet, "--basis", "mg/kg")
	if code != exitOK || !strings.HasPrefix(out, "Run PASS: 4 checks (0 failed), 4 samples: 4 valid, 0 invalid, 0 unbracketed; 2 replicate groups: 2 valid, 0 invalid, 0 flagged") {
		t.Fatalf("exit %d, stdout:\n%s\nstderr:\n%s", code, out, errOut)
	}
	for _, want := range []string{"Reported (basis: mg/kg", "Replicate groups", "│ Status", "A-1", "valid only when every member is valid"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	sheet = seqLabSheet(t, dir, "5.5")
	out, errOut, code = run(t, "sequence", refs, sheet, "--basis", "mg/kg", "--format", "csv")
	if code != exitFlagged || !strings.Contains(errOut, "2 replicate groups: 1 valid, 1 invalid") {
		t.Fatalf("exit %d, stdout:\n%s\nstderr:\n%s", code, out, errOut)
	}
	if !strings.Contains(out, "\nreported_sample,group,compound,unit,value,u,lod,loq,reported,status\n") ||
		!strings.Contains(out, "\nA-1,A,red,mg/kg,") || !strings.Contains(out, ",grubbs_crit,members,outliers,flags,status\n") ||
		!strings.Contains(out, "\nB,red,mg/kg,2,") {
		t.Errorf("csv:\n%s", out)
	}
	js := filepath.Join(dir, "run.json")
	if _, errOut, code = run(t, "sequence", refs, sheet, "--basis", "mg/kg", "-o", js); code != exitFlagged {
		t.Fatalf("json: exit %d: %s", code, errOut)
	}
	var doc struct {
		Seq struct {
			Groups []struct{ Group, Status string }
		} `json:"sequence"`
		Lab struct {
			Basis    string
			Reported []struct{ Sample, Status, Reported string }
			Groups   []struct{ Group, Status string }
		}
	}
	b, err := os.ReadFile(js)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &doc); err != nil || doc.Lab.Basis != "mg/kg" || len(doc.Lab.Reported) != 8 ||
		doc.Lab.Reported[0].Status != "valid" || doc.Lab.Reported[4].Status != "invalid" || len(doc.Seq.Groups) != 2 ||
		doc.Seq.Groups[0].Status != "valid" || doc.Seq.Groups[1].Status != "invalid" || doc.Lab.Groups[2].Status != "invalid" {
		t.Errorf("json %v: %+v\n%s", err, doc, b)
	}
	// A mass fraction without the preparation is refused, naming the row.
	text, _ := os.ReadFile(sheet)
	bad := strings.Replace(string(text), "A-2,A,2.5,g,50,mL", "A-2,A,,,,", 1)
	if err := os.WriteFile(sheet, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, errOut, code = run(t, "sequence", refs, sheet, "--basis", "mg/kg"); code != exitFailure || !strings.Contains(errOut, "run-lab.csv:5") ||
		!strings.Contains(errOut, "needs its mass") {
		t.Errorf("no preparation: exit %d: %s", code, errOut)
	}
}
