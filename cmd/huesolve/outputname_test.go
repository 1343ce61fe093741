package main

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestOutputFormatFromName: -o NAME.csv or NAME.json without --format
// writes CSV or JSON (not a box-drawing table), for every command with
// -o and --format; a --format that contradicts the name is refused
// before any work; .txt and unknown names keep the table (or --format's
// choice). An .html name writes the review report where the command has
// one (solve, verify: the same as --report) and is refused by window.
func TestOutputFormatFromName(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	scan := filepath.Join(dir, "chk-1.csv")
	cmds := map[string][]string{
		"solve":  {"solve", refs, scan},
		"verify": {"verify", refs, checks},
		"window": {"window", refs},
	}
	for name, args := range cmds {
		csvOut := filepath.Join(dir, name+"-out.CSV")
		if _, errOut, code := run(t, append(args, "-o", csvOut)...); code != exitOK && code != exitFlagged {
			t.Fatalf("%s -o %s: exit %d\n%s", name, csvOut, code, errOut)
		}
		data, err := os.ReadFile(csvOut)
		if err != nil {
			t.Fatal(err)
		}
		if strings.ContainsAny(string(data), "│─┌") || !strings.Contains(firstDataLine(string(data)), ",") {
			t.Errorf("%s -o %s wrote no CSV:\n%.300s", name, csvOut, data)
		}
		jsonOut := filepath.Join(dir, name+"-out.json")
		if _, errOut, code := run(t, append(args, "-o", jsonOut)...); code != exitOK && code != exitFlagged {
			t.Fatalf("%s -o %s: exit %d\n%s", name, jsonOut, code, errOut)
		}
		if data, _ := os.ReadFile(jsonOut); !json.Valid(data) {
			t.Errorf("%s -o %s wrote no JSON:\n%.300s", name, jsonOut, data)
		}
		txtOut := filepath.Join(dir, name+"-out.txt")
		if _, errOut, code := run(t, append(args, "-o", txtOut)...); code != exitOK && code != exitFlagged {
			t.Fatalf("%s -o %s: exit %d\n%s", name, txtOut, code, errOut)
		}
		if data, _ := os.ReadFile(txtOut); !strings.ContainsAny(string(data), "│─") {
			t.Errorf("%s -o %s wrote no table:\n%.300s", name, txtOut, data)
		}
		// --format says otherwise for a .txt file: allowed.
		if _, errOut, code := run(t, append(args, "-o", txtOut, "--format", "json")...); code != exitOK && code != exitFlagged {
			t.Errorf("%s -o %s --format json: exit %d\n%s", name, txtOut, code, errOut)
		} else if data, _ := os.ReadFile(txtOut); !json.Valid(data) {
			t.Errorf("%s -o %s --format json wrote no JSON", name, txtOut)
		}
		for _, bad := range [][]string{
			{"-o", filepath.Join(dir, name+"-x.csv"), "--format", "json"},
			{"-o", filepath.Join(dir, name+"-x.json"), "--format", "table"},
		} {
			_, errOut, code := run(t, append(args, bad...)...)
			if code != exitUsage || !strings.Contains(errOut, bad[1]) {
				t.Errorf("%s %v: exit %d, stderr %q; want exit %d naming the file", name, bad, code, errOut, exitUsage)
			}
			if _, err := os.Stat(bad[1]); err == nil {
				t.Errorf("%s %v: the file was written", name, bad)
			}
		}
		page := filepath.Join(dir, name+"-x.html")
		out, errOut, code := run(t, append(args, "-o", page)...)
		data, _ = os.ReadFile(page)
		switch {
		case name == "window":
			if code != exitUsage || !strings.Contains(errOut, page) || data != nil {
				t.Errorf("window -o %s: exit %d, stderr %q; want exit %d and no file", page, code, errOut, exitUsage)
			}
		case code != exitOK && code != exitFlagged:
			t.Errorf("%s -o %s: exit %d\n%s", name, page, code, errOut)
		case !strings.HasPrefix(string(data), "<!DOCTYPE html>") || !strings.ContainsAny(out, "│─"):
			t.Errorf("%s -o %s: want the review page in the file and the table on stdout; file %.100q, stdout %.100q", name, page, data, out)
		}
		if _, errOut, code := run(t, append(args, "-o", page, "--format", "csv")...); name != "window" && (code != exitUsage || !strings.Contains(errOut, "HTML page but --format is csv")) {
			t.Errorf("%s -o %s --format csv: exit %d, stderr %q", name, page, code, errOut)
		}
	}
}

// TestTableToPipeKeepsEverything: solve's table written to a pipe or to
// an -o file keeps long sample names whole and every fit-figure column,
// and says nothing about cuts (only a terminal's width limits a table).
func TestTableToPipeKeepsEverything(t *testing.T) {
	dir, refs, _ := valCase(t, 1)
	data, err := os.ReadFile(filepath.Join(dir, "chk-1.csv"))
	if err != nil {
		t.Fatal(err)
	}
	scans := filepath.Join(dir, "dyebath")
	if err := os.Mkdir(scans, 0o755); err != nil {
		t.Fatal(err)
	}
	var names []string
	for i := 1; i <= 6; i++ {
		name := fmt.Sprintf("FH-2026-12-04-dyebath-v12-sample-%03d", i)
		names = append(names, name)
		body := strings.Replace(string(data), "chk-1 [absorbance]", name+" [absorbance]", 1)
		if err := os.WriteFile(filepath.Join(scans, name+".csv"), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	t.Setenv("COLUMNS", "80")
	check := func(how, out string) {
		t.Helper()
		for _, want := range append(names, "χ²/dof", "RMS", "DW") {
			if !strings.Contains(out, want) {
				t.Errorf("%s: %q missing from the table:\n%s", how, want, out)
			}
		}
		if strings.Contains(out, "…") || strings.Contains(out, "Cut for") {
			t.Errorf("%s: the table was cut:\n%s", how, out)
		}
	}

	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	got := make(chan string)
	go func() {
		b, _ := io.ReadAll(r)
		got <- string(b)
	}()
	var errb strings.Builder
	code := Execute([]string{"solve", refs, scans}, strings.NewReader(""), w, &errb)
	w.Close()
	out := <-got
	r.Close()
	if code != exitOK && code != exitFlagged {
		t.Fatalf("solve to a pipe: exit %d\n%s", code, errb.String())
	}
	check("pipe", out)

	file := filepath.Join(dir, "table.txt")
	if _, errOut, code := run(t, "solve", refs, scans, "-o", file); code != exitOK && code != exitFlagged {
		t.Fatalf("solve -o %s: exit %d\n%s", file, code, errOut)
	}
	b, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	check("-o file", string(b))
}

// firstDataLine is the first line of a CSV file that is not a "#"
// comment (the run's record).
func firstDataLine(s string) string {
	for _, l := range strings.Split(s, "\n") {
		if !strings.HasPrefix(l, "#") {
			return l
		}
	}
	return ""
}
