package sheet

import (
	"bytes"
	"errors"
	"math"
	"reflect"
	"strings"
	"testing"
	"testing/iotest"

	"huesolve/spectrum"
)

// TestParseDialects: the same sheet written in each dialect reads to the
// same header and rows.
func TestParseDialects(t *testing.T) {
	want := [][]string{{"sample", "dilution", "note"}, {"A 1", "2.5", "first"}, {"B", "10", ""}}
	for _, c := range []struct {
		name, text string
		delim      byte
		lines      []int
	}{
		{"comma", "sample,dilution,note\nA 1,2.5,first\nB,10,\n", ',', []int{1, 2, 3}},
		{"semicolon decimal comma", "sample;dilution;note\nA 1;2,5;first\nB;10;\n", ';', []int{1, 2, 3}},
		{"tab", "sample\tdilution\tnote\nA 1\t2,5\tfirst\nB\t10\t\n", '\t', []int{1, 2, 3}},
		{"BOM and CRLF", "\ufeffsample,dilution,note\r\nA 1,2.5,first\r\nB,10,\r\n", ',', []int{1, 2, 3}},
		{"CR only", "sample,dilution,note\rA 1,2.5,first\rB,10,\r", ',', []int{1, 2, 3}},
		{"comments and blanks", "# made 2 May\n\n  # indented comment\nsample,dilution,note\n\n,,\nA 1,2.5,first\n   \nB,10,\n", ',', []int{4, 7, 9}},
		{"quoted", "\"sample\",\"dilution\",\"note\"\n\"A 1\", \"2.5\" ,\"first\"\n B , 10 ,\"\"\n", ',', []int{1, 2, 3}},
		{"no final line end", "sample,dilution,note\nA 1,2.5,first\nB,10,", ',', []int{1, 2, 3}},
	} {
		t.Run(c.name, func(t *testing.T) {
			sh, err := parse([]byte(c.text), "s.csv", Options{})
			if err != nil {
				t.Fatal(err)
			}
			if sh.Delim != c.delim {
				t.Errorf("delimiter %q, want %q", sh.Delim, c.delim)
			}
			rows := append([]Row{sh.Header}, sh.Rows...)
			if len(rows) != len(want) {
				t.Fatalf("%d rows with the header, want %d", len(rows), len(want))
			}
			for i, r := range rows {
				if r.Fields[1] == "2,5" { // the decimal comma stays in the text
					r.Fields = []string{r.Fields[0], "2.5", r.Fields[2]}
				}
				if !reflect.DeepEqual(r.Fields, want[i]) || r.Line != c.lines[i] {
					t.Errorf("row %d: %q on line %d, want %q on line %d", i, r.Fields, r.Line, want[i], c.lines[i])
				}
			}
			for _, r := range sh.Rows {
				if v, err := sh.Number(r, 1); err != nil || (v != 2.5 && v != 10) {
					t.Errorf("line %d: Number = %v, %v", r.Line, v, err)
				}
			}
		})
	}
}

// TestSniffBrackets: a separator inside a heading's brackets (a unit
// with a molar mass) does not choose the dialect; one outside does.
// Before, "dye (µM; M=5 g/mol)" made a comma-separated sheet read as
// semicolon-separated.
func TestSniffBrackets(t *testing.T) {
	for _, c := range []struct {
		text string
		want byte
	}{
		{"scan,dye (µM; M=5 g/mol),b [mg/L]\nx,1,2\n", ','},
		{"scan;\"dye (µM; M=5 g/mol)\";b [mg/L]\nx;1;2\n", ';'},
		{"scan\tdye (µM; M=5 g/mol)\nx\t1\n", '\t'},
		{"scan,dye (µM; M=5 g/mol\nx;1\n", ';'}, // unbalanced: as before
	} {
		sh, err := parse([]byte(c.text), "s.csv", Options{})
		if err != nil {
			t.Errorf("%q: %v", c.text, err)
			continue
		}
		if sh.Delim != c.want {
			t.Errorf("%q: delimiter %q, want %q", c.text, sh.Delim, c.want)
		}
	}
}

// TestParseQuoting: quotes around a field, "" inside, a separator and a
// line end inside quotes (the row keeps the line it starts on).
func TestParseQuoting(t *testing.T) {
	sh, err := parse([]byte("name,note\n\"a,b\",\"say \"\"hi\"\"\"\n\"two\nlines\",x\nlast,y\n"), "q.csv", Options{})
	if err != nil {
		t.Fatal(err)
	}
	got := [][]string{sh.Rows[0].Fields, sh.Rows[1].Fields, sh.Rows[2].Fields}
	want := [][]string{{"a,b", `say "hi"`}, {"two\nlines", "x"}, {"last", "y"}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("fields %q, want %q", got, want)
	}
	if l := []int{sh.Rows[0].Line, sh.Rows[1].Line, sh.Rows[2].Line}; !reflect.DeepEqual(l, []int{2, 3, 5}) {
		t.Errorf("lines %v, want 2 3 5", l)
	}
}

// TestParseLatin1: a sheet that is not UTF-8 is read as Latin-1 with one
// warning naming the line of the first such byte.
func TestParseLatin1(t *testing.T) {
	var warns []string
	sh, err := parse([]byte("# lab\nsample,unit\nA,\xb5g/L\n"), "l.csv", Options{What: "sample sheet", Warn: func(m string) { warns = append(warns, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if sh.Rows[0].Fields[1] != "µg/L" {
		t.Errorf("unit %q, want µg/L", sh.Rows[0].Fields[1])
	}
	if len(warns) != 1 || !strings.HasPrefix(warns[0], "l.csv:3: the sample sheet is not UTF-8") || !strings.Contains(warns[0], "Latin-1") {
		t.Errorf("warnings %q", warns)
	}
	warns = nil
	if _, err := parse([]byte("\ufeffsample,unit\nA,µg/L\n"), "u.csv", Options{Warn: func(m string) { warns = append(warns, m) }}); err != nil || len(warns) != 0 {
		t.Errorf("UTF-8 with BOM: %v, warnings %q", err, warns)
	}
}

// TestParseErrors: every problem is a *spectrum.ParseError at the place
// the message names.
func TestParseErrors(t *testing.T) {
	for _, c := range []struct {
		name, text string
		opt        Options
		want       string // prefix of the message
		is         error
	}{
		{"extra field", "sample,dilution\nA,2\nlot-101,2,5\n", Options{}, "e.csv:3:3: row has 3 fields but the header names 2 columns", nil},
		{"extra empty field", "sample,dilution\nA,2,\n", Options{}, "e.csv:2:3: row has 3 fields", nil},
		{"missing field", "sample,dilution,path_cm\nA,2\n", Options{}, "e.csv:2:3: row has 2 fields but the header names 3 columns", nil},
		{"one field", "sample;dilution\nA\n", Options{}, "e.csv:2:2: row has 1 field but the header names 2 columns", nil},
		{"bare quote", "sample,dilution\nA\"1,2\n", Options{}, "e.csv:2:1: a \" inside a field that is not quoted", nil},
		{"open quote", "sample,dilution\nA,\"2\nB,3\n", Options{}, "e.csv:2:2: quoted field not closed", nil},
		{"text after quote", "sample,dilution\n\"A\"x,2\n", Options{}, "e.csv:2:1: text after the closing \"", nil},
		{"long line", "sample,dilution\nA," + strings.Repeat("1", 100) + "\n", Options{MaxLine: 64, What: "sample sheet"}, "e.csv:2: line longer than 64 bytes: is this a sample sheet?", nil},
		{"long quoted line", "sample,dilution\n\"" + strings.Repeat("x", 80) + "\n\",2\n", Options{MaxLine: 64}, "e.csv:2: line longer than 64 bytes", nil},
		{"too large", "sample,dilution\nA,2\n", Options{MaxBytes: 10, What: "sample sheet"}, "e.csv: more than the 10 bytes a sample sheet may take", errTooLarge},
		{"empty", "", Options{}, "e.csv: no data", spectrum.ErrEmpty},
		{"only comments", "# x\n\n,,\n", Options{}, "e.csv: no data", spectrum.ErrEmpty},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := parse([]byte(c.text), "e.csv", c.opt)
			if err == nil || !strings.HasPrefix(err.Error(), c.want) {
				t.Fatalf("error %v, want prefix %q", err, c.want)
			}
			var pe *spectrum.ParseError
			if !errors.As(err, &pe) {
				t.Errorf("%T is not a *spectrum.ParseError", err)
			}
			if c.is != nil && !errors.Is(err, c.is) {
				t.Errorf("error %v does not wrap %v", err, c.is)
			}
		})
	}
}

// TestRead: Read stops at the size cap whatever the reader (a pipe is
// not trusted to be small) and reads what fits.
func TestRead(t *testing.T) {
	text := "sample,dilution\nA,2\n"
	if _, err := Read(iotest.OneByteReader(strings.NewReader(text+strings.Repeat("B,3\n", 100))), "p.csv", Options{MaxBytes: 64, What: "sample sheet"}); !errors.Is(err, errTooLarge) ||
		!strings.HasPrefix(err.Error(), "p.csv: more than the 64 bytes a sample sheet may take") {
		t.Errorf("over the cap: %v", err)
	}
	sh, err := Read(strings.NewReader(text), "p.csv", Options{MaxBytes: int64(len(text))})
	if err != nil || len(sh.Rows) != 1 {
		t.Errorf("at the cap: %v", err)
	}
	if _, err := Read(iotest.ErrReader(errors.New("disk on fire")), "p.csv", Options{}); err == nil || !strings.Contains(err.Error(), "p.csv: disk on fire") {
		t.Errorf("read error: %v", err)
	}
}

// TestNumber: the number syntax is the spectrum readers'; a decimal comma
// only where the separator is not a comma, and not mixed with points.
func TestNumber(t *testing.T) {
	for _, c := range []struct {
		text string
		want float64
		err  error
	}{
		{"x,v\na,2.5\n", 2.5, nil},
		{"x,v\na,\"2,5\"\n", 0, ErrNotNumber},
		{"x;v\na;2,5\n", 2.5, nil},
		{"x;v\na;1e-3\n", 1e-3, nil},
		{"x;v\na;-0.25\n", -0.25, nil},
		{"x,v\na,0x1p3\n", 0, ErrNotNumber},
		{"x,v\na,1_0\n", 0, ErrNotNumber},
		{"x,v\na,Inf\n", 0, ErrNotNumber},
		{"x,v\na,NaN\n", 0, ErrNotNumber},
		{"x,v\na,1e400\n", 0, ErrNotNumber},
		{"x,v\na,1+3\n", 0, ErrNotNumber},
		{"x,v\na, \n", 0, ErrNotNumber},
	} {
		sh, err := parse([]byte(c.text), "n.csv", Options{})
		if err != nil {
			t.Fatalf("%q: %v", c.text, err)
		}
		v, err := sh.Number(sh.Rows[0], 1)
		if !errors.Is(err, c.err) || (c.err == nil && v != c.want) {
			t.Errorf("%q: %v, %v; want %v, %v", c.text, v, err, c.want, c.err)
		}
	}
	sh, err := parse([]byte("x;v\na;2,5\nb;3.5\n"), "m.csv", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sh.Number(sh.Rows[0], 1); err != nil {
		t.Fatal(err)
	}
	if _, err := sh.Number(sh.Rows[1], 1); !errors.Is(err, spectrum.ErrMixedMark) || !strings.Contains(err.Error(), "from line 2") {
		t.Errorf("mixed marks: %v", err)
	}
}

// TestLayout: declared columns by name (case and blanks ignored), notes
// dropped, other columns returned or refused, a nameless column allowed
// only when it is empty.
func TestLayout(t *testing.T) {
	errHead := errors.New("bad header")
	cols := Columns{Names: []string{"sample", "dilution"}, Ignore: NoteColumns(), Known: "a test sheet has sample, dilution", Wrap: errHead}
	sh, err := parse([]byte(" Sample ,Notes,DILUTION,\nA,x,2,\n"), "l.csv", Options{})
	if err != nil {
		t.Fatal(err)
	}
	l, err := sh.Layout(cols)
	if err != nil || l.Col("sample") != 0 || l.Col("dilution") != 2 || l.Col("path_cm") != -1 || len(l.Others) != 0 {
		t.Errorf("layout %+v, %v", l, err)
	}
	others := cols
	others.Others = true
	for _, c := range []struct {
		text string
		cols Columns
		want string
	}{
		{"sample,dilution,path\nA,2,3\n", cols, `l.csv:1:3: bad header: unknown column "path"; a test sheet has sample, dilution`},
		{"sample,dilution,Dilution\nA,2,3\n", cols, `l.csv:1:3: bad header: column "dilution" given twice (first in column 2)`},
		{"sample,,dilution\nA,x,2\n", cols, "l.csv:1:2: bad header: column 2 has values but no name"},
	} {
		sh, err := parse([]byte(c.text), "l.csv", Options{})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sh.Layout(c.cols); err == nil || !strings.HasPrefix(err.Error(), c.want) || !errors.Is(err, errHead) {
			t.Errorf("%q: %v, want prefix %q", c.text, err, c.want)
		}
	}
	sh, err = parse([]byte("sample,dye (mg/L),note,other\nA,1,,2\n"), "l.csv", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if l, err := sh.Layout(others); err != nil || !reflect.DeepEqual(l.Others, []int{1, 3}) {
		t.Errorf("others: %+v, %v", l, err)
	}
}

// FuzzSheet: any input gives a sheet or a *spectrum.ParseError naming the
// file; a sheet has rows of the header's width, fields without
// surrounding blanks, and numbers that are finite.
func FuzzSheet(f *testing.F) {
	for _, s := range []string{
		"sample,dilution,path_cm\nA1,10,\nrun2.csv,,0.5\n",
		"\ufeff# c\r\nSample;Dilution\r\n\"B 3\";2,5\r\n",
		"scan\tdye (mg/L)\tnote\ns1.csv\t1e-3\t\"two\nlines\"\n",
		"a,b\rc,d\r",
		"x,v\na,\xb5\n",
		"a,\"b\nc,d\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		sh, err := Read(bytes.NewReader(data), "fuzz.csv", Options{MaxLine: 256, MaxBytes: 4096})
		if err != nil {
			var pe *spectrum.ParseError
			if !errors.As(err, &pe) || !strings.HasPrefix(err.Error(), "fuzz.csv") {
				t.Fatalf("error %T %q", err, err)
			}
			return
		}
		for _, r := range sh.Rows {
			if len(r.Fields) != len(sh.Header.Fields) || r.Line <= sh.Header.Line {
				t.Fatalf("line %d: %d fields under a header of %d (line %d)", r.Line, len(r.Fields), len(sh.Header.Fields), sh.Header.Line)
			}
			for i, fv := range r.Fields {
				if fv != strings.TrimSpace(fv) {
					t.Fatalf("line %d: field %q not trimmed", r.Line, fv)
				}
				if v, err := sh.Number(r, i); err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
					t.Fatalf("line %d: %q read as %v", r.Line, fv, v)
				}
			}
		}
	})
}
