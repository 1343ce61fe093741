package provenance

import (
	"encoding/json"
	"slices"
	"strings"
	"testing"
)

func TestFieldsOrder(t *testing.T) {
	r := &Run{
		Tool: "huesolve", Version: "1.0", Time: "2026-01-01T00:00:00Z",
		Command:   Command("/usr/local/bin/huesolve", []string{"solve", "--method", "m.json", "lot 7.csv"}),
		Method:    &File{Path: "m.json", Checksum: "aa"},
		Reference: &File{Path: "refs.json", Checksum: "bb"},
		Blank:     &File{Path: "blank.csv", SHA256: "cc"},
		Sheets:    []File{{Role: "sample sheet", Path: "samples.csv", SHA256: "dd"}},
		Interferents: []File{{Role: "stored in the reference set", Path: "scans/haze.csv", SHA256: "a1"},
			{Path: "base.csv", SHA256: "a2"}},
		Settings:  Settings{{Name: "window", Value: "350-750"}, {Name: "baseline", Value: "offset"}},
		Overrides: []Override{{Name: "baseline", Value: "linear", Method: "offset"}},
		Inputs:    []File{{Path: "lot 7.csv", SHA256: "ee"}, {Path: "gone.csv", Note: "could not be read"}, {Path: "a\nb.csv", SHA256: "ff"}},
	}
	var got []string
	for _, f := range r.Fields() {
		got = append(got, f.Key+": "+f.Value)
	}
	want := []string{
		"tool: huesolve", "version: 1.0", "time: 2026-01-01T00:00:00Z",
		"command: huesolve solve --method m.json 'lot 7.csv'",
		"method: m.json", "method_checksum: aa", "reference_set: refs.json", "reference_set_checksum: bb",
		"blank: cc  blank.csv", "sample_sheet: dd  samples.csv",
		"interferent: a1  scans/haze.csv", "interferent: a2  base.csv",
		"window: 350-750", "baseline: offset", "override: baseline linear (method: offset)",
		"input: ee  lot 7.csv", "input: gone.csv (could not be read)", `input: ff  "a\nb.csv"`,
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("fields:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

func TestCommandLineQuoting(t *testing.T) {
	got := CommandLine([]string{"huesolve", "solve", "it's.csv", "", "*.csv", "a-b_c/d.csv"})
	if want := `huesolve solve 'it'\''s.csv' '' '*.csv' a-b_c/d.csv`; got != want {
		t.Errorf("%s, want %s", got, want)
	}
}

// TestSettingsJSON: settings are one object whose keys keep their order,
// and read back in it.
func TestSettingsJSON(t *testing.T) {
	ss := Settings{{Name: "window", Value: "350-750"}, {Name: "baseline", Value: "offset"}, {Name: "ceiling", Value: "2"}}
	b, err := json.Marshal(ss)
	if err != nil {
		t.Fatal(err)
	}
	if want := `{"window":"350-750","baseline":"offset","ceiling":"2"}`; string(b) != want {
		t.Errorf("%s, want %s", b, want)
	}
	var back Settings
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if len(back) != 3 || back[0] != ss[0] || back[2] != ss[2] {
		t.Errorf("read back %v", back)
	}
	if err := json.Unmarshal([]byte(`["window"]`), &back); err == nil {
		t.Error("an array read as settings")
	}
}

// An InputList's files follow Run.Inputs in every form of the record:
// the fields (and so the CSV comment lines), AllInputs and the JSON
// form, which lists them in "inputs" as a Run holding them all in
// Inputs would.
func TestInputListFollowsInputs(t *testing.T) {
	var sum [32]byte
	for i := range sum {
		sum[i] = byte(i)
	}
	hexSum := "000102030405060708090a0b0c0d0e0f101112131415161718191a1b1c1d1e1f"
	list := &InputList{}
	list.Grow(2)
	list.Add("b.csv", &sum, "")
	list.Add("c.csv", nil, "could not be read")
	compact := &Run{Tool: "t", Inputs: []File{{Path: "a.csv", SHA256: "aa"}}, InputList: list}
	whole := &Run{Tool: "t", Inputs: []File{
		{Path: "a.csv", SHA256: "aa"},
		{Path: "b.csv", SHA256: hexSum},
		{Path: "c.csv", Note: "could not be read"},
	}}
	if got := compact.AllInputs(); !slices.Equal(got, whole.Inputs) {
		t.Errorf("AllInputs = %+v, want %+v", got, whole.Inputs)
	}
	if got, want := compact.Fields(), whole.Fields(); !slices.Equal(got, want) {
		t.Errorf("Fields = %+v, want %+v", got, want)
	}
	if list.Len() != 2 || (*InputList)(nil).Len() != 0 {
		t.Errorf("Len = %d, nil list %d", list.Len(), (*InputList)(nil).Len())
	}
	if in := compact.Fields(); in[len(in)-2].Value != hexSum+"  b.csv" || in[len(in)-1].Value != "c.csv (could not be read)" {
		t.Errorf("input fields %+v", in[len(in)-2:])
	}
}
