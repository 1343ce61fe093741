package unmix

import (
	"strings"
	"testing"

	"huesolve/spectrum"
)

func TestSampleSheet(t *testing.T) {
	text := "# dilutions\nSample;Dilution;Path_cm\nA1;10;\nrun2.csv;;0.5\n\"B 3\";2.5;0.2\n"
	ss, err := parseSampleSheet(strings.NewReader(text), "sheet.csv")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name, file string
		want       Factors
		ok         bool
	}{
		{"A1", "x.csv", Factors{Dilution: 10}, true},
		{"", "data/run2.csv", Factors{PathCM: 0.5}, true},
		{"col", "data/run2.csv", Factors{PathCM: 0.5}, true},
		{"B 3", "y.csv", Factors{Dilution: 2.5, PathCM: 0.2}, true},
		{"Q", "data/A1.txt", Factors{Dilution: 10}, true},
		{"Q", "q.csv", Factors{}, false},
	} {
		s := &spectrum.Spectrum{Name: c.name, Source: spectrum.Source{File: c.file}}
		f, ok := ss.lookup(s)
		if f != c.want || ok != c.ok {
			t.Errorf("Lookup(%q, %q) = %+v, %v, want %+v, %v", c.name, c.file, f, ok, c.want, c.ok)
		}
	}
	for _, c := range []struct{ text, want string }{
		{"sample,dilution\nA,zero\n", "sheet.csv:2:2: dilution \"zero\" is not a number"},
		{"sample,dilution\nA,1+3\n", "sheet.csv:2:2: dilution \"1+3\" is not a number"},
		{"sample,dilution\nA,-2\n", "sheet.csv:2:2: dilution \"-2\" is not a positive number"},
		{"sample,dilution\nA,NaN\n", "sheet.csv:2:2:"},
		{"sample,dilution\nA,2e9\n", "sheet.csv:2:2: dilution \"2e9\": want a factor from 1e-06 to 1e+09"},
		{"sample,dilution,path_cm\nA,2,4e-324\n", "sheet.csv:2:3: path_cm \"4e-324\": want 0.0001 to 100 cm"},
		{"sample;path_cm\nA;150\n", "sheet.csv:2:2: path_cm \"150\""},
		{"name,dilution\nA,2\n", "sheet.csv:1:1: unknown column \"name\""},
		{"sample,note\nA,x\n", "sheet.csv:1: header needs"},
		{"sample,path_cm\nA,1\nA,2\n", "sheet.csv:3:1: sample \"A\" already given on line 2"},
		{"sample,path_cm\n,1\n", "sheet.csv:2:1: empty sample name"},
		{"", "sheet.csv: no data"},
	} {
		_, err := parseSampleSheet(strings.NewReader(c.text), "sheet.csv")
		if err == nil || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("parseSampleSheet(%q) error %v, want prefix %q", c.text, err, c.want)
		}
	}
}

// FuzzSampleSheet: any input gives a sheet or an error naming the file,
// never a panic.
func FuzzSampleSheet(f *testing.F) {
	for _, s := range []string{
		"sample,dilution,path_cm\nA1,10,\nrun2.csv,,0.5\n",
		"# c\nSample;Dilution\n\"B 3\";2.5\n",
		"sample\tpath_cm\nx\t1e-3\n",
		"sample,dilution\nA,NaN\n",
		"",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		ss, err := parseSampleSheet(strings.NewReader(text), "fuzz.csv")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz.csv") {
				t.Fatalf("error %q does not name the file", err)
			}
			return
		}
		for name := range ss.rows {
			fs, ok := ss.lookup(&spectrum.Spectrum{Name: name})
			if !ok || fs.Dilution < 0 || fs.PathCM < 0 {
				t.Fatalf("Lookup(%q) = %+v, %v", name, fs, ok)
			}
		}
	})
}
