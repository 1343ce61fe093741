package unmix

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"huesolve/internal/bytesize"
	"huesolve/spectrum"
)

// SampleSheet gives per-sample dilution factors and path lengths, read
// from delimited text with a header naming the columns "sample" and at
// least one of "dilution" and "path_cm" (any order, case ignored; comma,
// semicolon or tab separated, a decimal comma accepted when the separator
// is not a comma; lines starting with # are comments). An
// empty cell means the default (1 for dilution, the reference set's path
// for path_cm). Columns headed note or comment are ignored; any other
// column is refused, so that a misspelt header ("path" for "path_cm")
// cannot be dropped without a word.
type SampleSheet struct {
	File  string
	rows  map[string]sheetRow
	order []string // sample names in sheet order
}

// sheetColumns are the columns a sample sheet may have, as the error for
// an unknown one lists them.
const sheetColumns = "sample, dilution, path_cm (and note or comment, ignored)"

type sheetRow struct {
	f    Factors
	line int
}

// Limits of a sample sheet.
const (
	// MaxSampleSheetBytes is the largest sample sheet ReadSampleSheet
	// reads (64 MiB, a million samples and more).
	MaxSampleSheetBytes = 64 << 20
	// maxSheetLine is the longest line of a sample sheet (64 KiB).
	maxSheetLine = 64 << 10
)

// ReadSampleSheet reads a sample sheet file. A folder, or a file larger
// than MaxSampleSheetBytes, is refused before reading.
func ReadSampleSheet(path string) (*SampleSheet, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("unmix: sample sheet: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	switch {
	case err != nil:
		return nil, fmt.Errorf("unmix: sample sheet: %w", err)
	case st.IsDir():
		return nil, fmt.Errorf("unmix: sample sheet %s is a folder; give the sheet file", path)
	case st.Mode().IsRegular() && st.Size() > MaxSampleSheetBytes:
		return nil, fmt.Errorf("unmix: sample sheet %s is %s, more than the %s a sample sheet may take",
			path, bytesize.Text(st.Size()), bytesize.Text(MaxSampleSheetBytes))
	}
	return ParseSampleSheet(&sheetCap{r: f, left: MaxSampleSheetBytes}, path)
}

// sheetCap fails a read once more than MaxSampleSheetBytes came through
// (a pipe, or a file growing while it is read).
type sheetCap struct {
	r    io.Reader
	left int64
}

func (c *sheetCap) Read(p []byte) (int, error) {
	if c.left < 0 {
		return 0, fmt.Errorf("more than the %s a sample sheet may take", bytesize.Text(MaxSampleSheetBytes))
	}
	if int64(len(p)) > c.left+1 {
		p = p[:c.left+1]
	}
	n, err := c.r.Read(p)
	c.left -= int64(n)
	return n, err
}

// ParseSampleSheet reads a sample sheet from r; file names it in errors,
// which are *spectrum.ParseError values with line and column.
func ParseSampleSheet(r io.Reader, file string) (*SampleSheet, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), maxSheetLine)
	sh := &SampleSheet{File: file, rows: map[string]sheetRow{}}
	perr := func(line, col int, format string, a ...any) error {
		return &spectrum.ParseError{File: file, Line: line, Column: col, Err: fmt.Errorf(format, a...)}
	}
	line := 0
	var sep string
	iSample, iDil, iPath := -1, -1, -1
	for sc.Scan() {
		line++
		text := strings.TrimSpace(strings.TrimPrefix(sc.Text(), "\ufeff"))
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		if sep == "" {
			sep = ","
			for _, c := range []string{"\t", ";", ","} {
				if strings.Contains(text, c) {
					sep = c
					break
				}
			}
			for i, h := range strings.Split(text, sep) {
				word := strings.ToLower(strings.Trim(strings.TrimSpace(h), `"`))
				var dst *int
				switch word {
				case "sample":
					dst = &iSample
				case "dilution":
					dst = &iDil
				case "path_cm":
					dst = &iPath
				case "note", "comment":
					continue
				default:
					return nil, perr(line, i+1, "unknown column %q; a sample sheet has the columns %s", strings.TrimSpace(h), sheetColumns)
				}
				if *dst >= 0 {
					return nil, perr(line, i+1, "column %q given twice (first in column %d)", word, *dst+1)
				}
				*dst = i
			}
			if iSample < 0 || (iDil < 0 && iPath < 0) {
				return nil, perr(line, 0, "header needs columns sample and dilution and/or path_cm, got %q", text)
			}
			continue
		}
		cells := strings.Split(text, sep)
		cell := func(i int) string {
			if i < 0 || i >= len(cells) {
				return ""
			}
			return strings.TrimSpace(cells[i])
		}
		name := strings.Trim(cell(iSample), `"`)
		if name == "" {
			return nil, perr(line, iSample+1, "empty sample name")
		}
		if prev, dup := sh.rows[name]; dup {
			return nil, perr(line, iSample+1, "sample %q already given on line %d", name, prev.line)
		}
		var f Factors
		for _, c := range []struct {
			i    int
			dst  *float64
			what string
		}{{iDil, &f.Dilution, "dilution"}, {iPath, &f.PathCM, "path_cm"}} {
			v := cell(c.i)
			if v == "" {
				continue
			}
			num := v
			if sep != "," && strings.Count(num, ",") == 1 && !strings.Contains(num, ".") {
				num = strings.Replace(num, ",", ".", 1) // decimal comma
			}
			x, err := strconv.ParseFloat(num, 64)
			switch {
			case err != nil && !errors.Is(err, strconv.ErrRange) || math.IsNaN(x):
				return nil, perr(line, c.i+1, "%s %q is not a number", c.what, v)
			case !(x > 0) || math.IsInf(x, 0):
				return nil, perr(line, c.i+1, "%s %q is not a positive number", c.what, v)
			}
			if err := CheckFactors(Factors{PathCM: x}); c.what == "path_cm" && err != nil {
				return nil, perr(line, c.i+1, "path_cm %q: want %g to %g cm", v, float64(MinPathCM), float64(MaxPathCM))
			}
			if err := CheckFactors(Factors{Dilution: x}); c.what == "dilution" && err != nil {
				return nil, perr(line, c.i+1, "dilution %q: want a factor from %g to %g", v, float64(MinDilution), float64(MaxDilution))
			}
			*c.dst = x
		}
		sh.rows[name] = sheetRow{f: f, line: line}
		sh.order = append(sh.order, name)
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, perr(line+1, 0, "line longer than %s: is this a sample sheet?", bytesize.Text(maxSheetLine))
		}
		return nil, perr(line+1, 0, "%v", err)
	}
	if sep == "" {
		return nil, perr(0, 0, "%w", spectrum.ErrEmpty)
	}
	return sh, nil
}

// Lookup finds the factors of a scan: by its name, else by its file's
// base name with and without extension. Zero fields mean "default".
func (sh *SampleSheet) Lookup(s *spectrum.Spectrum) (Factors, bool) {
	f, _, ok := sh.Match(s)
	return f, ok
}

// Match is Lookup that also returns the sheet's name of the row that
// matched ("" when none did), so that a caller can tell which rows of the
// sheet were never used.
func (sh *SampleSheet) Match(s *spectrum.Spectrum) (Factors, string, bool) {
	if sh == nil {
		return Factors{}, "", false
	}
	base := filepath.Base(s.Source.File)
	for _, k := range []string{s.Name, base, strings.TrimSuffix(base, filepath.Ext(base))} {
		if k == "" {
			continue
		}
		if r, ok := sh.rows[k]; ok {
			return r.f, k, true
		}
	}
	return Factors{}, "", false
}

// Names returns the sample names of the sheet in sheet order.
func (sh *SampleSheet) Names() []string {
	if sh == nil {
		return nil
	}
	return slices.Clone(sh.order)
}

// Line returns the sheet line of the row named name (0 if none).
func (sh *SampleSheet) Line(name string) int {
	if sh == nil {
		return 0
	}
	return sh.rows[name].line
}

// Len is the number of samples in the sheet.
func (sh *SampleSheet) Len() int { return len(sh.rows) }
