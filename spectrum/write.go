package spectrum

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"huesolve/internal/pkgerr"
)

// WriteOptions control WriteDelimited.
type WriteOptions struct {
	// Delimiter separates fields: ',' (the default when zero), ';' or
	// '\t'. Numbers always use a decimal point.
	Delimiter byte
	// Comments are written first, each as a line starting with "# ".
	Comments []string
}

// wavelengthHeader is the header cell WriteDelimited gives the wavelength
// column.
const wavelengthHeader = "wavelength (nm)"

// WriteDelimited writes spectra as delimited text that ReadDelimited reads
// back to the same numbers, names and quantities: one spectrum as a
// two-column scan, several as a wide table. The header names each
// spectrum followed by its quantity in brackets ("std 1 [absorbance]");
// numbers are written in the shortest form that reads back exactly
// (strconv 'g', -1).
//
// All spectra must share one wavelength grid (see SameGrid) and pass
// Check; otherwise nothing is written and an error is returned.
func WriteDelimited(w io.Writer, ss []*Spectrum, opt WriteOptions) error {
	if len(ss) == 0 {
		return pkgerr.Errorf("spectrum", "nothing to write: %w", ErrEmpty)
	}
	delim := opt.Delimiter
	if delim == 0 {
		delim = ','
	}
	if delim != ',' && delim != ';' && delim != '\t' {
		return pkgerr.Errorf("spectrum", "delimiter %q: use ',', ';' or tab", delim)
	}
	wl := ss[0].Wavelengths
	for _, s := range ss {
		if err := s.Check(); err != nil {
			return err
		}
		if !SameGrid(wl, s.Wavelengths) {
			return pkgerr.Errorf("spectrum", "%s (%s) is not on the wavelength grid of %s; resample first: %w", s.Name, s.Source, ss[0].Name, errGrid)
		}
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	for _, c := range opt.Comments {
		for _, l := range strings.Split(c, "\n") {
			bw.WriteString("# ")
			bw.WriteString(strings.TrimRight(l, "\r"))
			bw.WriteByte('\n')
		}
	}
	bw.WriteString(quoteCell(wavelengthHeader, delim))
	for _, s := range ss {
		bw.WriteByte(delim)
		q := s.Quantity
		if q == Unstated {
			q = Absorbance
		}
		name := strings.Join(strings.Fields(s.Name), " ")
		cell := "[" + q.String() + "]"
		if name != "" {
			cell = name + " " + cell
		}
		bw.WriteString(quoteCell(cell, delim))
	}
	bw.WriteByte('\n')
	buf := make([]byte, 0, 32)
	for i, x := range wl {
		buf = strconv.AppendFloat(buf[:0], x, 'g', -1, 64)
		bw.Write(buf)
		for _, s := range ss {
			bw.WriteByte(delim)
			buf = strconv.AppendFloat(buf[:0], s.Values[i], 'g', -1, 64)
			bw.Write(buf)
		}
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

// quoteCell quotes a header cell when it holds the delimiter or a quote.
func quoteCell(c string, delim byte) string {
	if strings.IndexByte(c, delim) < 0 && !strings.Contains(c, `"`) {
		return c
	}
	return `"` + strings.ReplaceAll(c, `"`, `""`) + `"`
}

// JCAMPOptions control WriteJCAMP.
type JCAMPOptions struct {
	// Compressed writes Y values as scaled integers in DIF form with DUP
	// repeats and the Y-value check; otherwise plain AFFN numbers that
	// read back exactly.
	Compressed bool
	// Origin and Owner fill the required ##ORIGIN= and ##OWNER= records.
	Origin, Owner string
}

// Layout of written JCAMP-DX files.
const (
	// jcampLineMax is the longest data line written (the standard asks
	// for at most 80 characters).
	jcampLineMax = 80
	// jcampDigits is the number of significant digits kept by the integer
	// Y values of compressed output: YFACTOR is chosen so that the
	// largest |Y| becomes an integer of this many digits, keeping a
	// relative precision of at least 1e-6 of the largest value.
	jcampDigits = 7
	// gridUniformTol bounds, in units of the mean step, how far a
	// wavelength may lie from an evenly spaced grid for the spectrum to
	// be written as ##XYDATA=(X++(Y..Y)); a less even grid is written as
	// ##XYPOINTS=(XY..XY).
	gridUniformTol = 1e-9
)

// WriteJCAMP writes one spectrum as a JCAMP-DX 4.24 file with XUNITS
// NANOMETERS. An evenly spaced spectrum is written as
// ##XYDATA=(X++(Y..Y)), in AFFN or (opt.Compressed) in DIF/DUP form with
// the Y-value check and a YFACTOR keeping about 7 significant digits; an
// unevenly spaced one as ##XYPOINTS=(XY..XY) in AFFN.
//
// Absorbance is written as YUNITS=ABSORBANCE; transmittance as
// YUNITS=TRANSMITTANCE, a fraction as the standard defines it, so percent
// transmittance is divided by 100 (and reads back as Transmittance).
// The spectrum must pass Check and hold at least two points.
func WriteJCAMP(w io.Writer, s *Spectrum, opt JCAMPOptions) error {
	if err := s.Check(); err != nil {
		return err
	}
	n := s.Len()
	if n < 2 {
		return pkgerr.Errorf("spectrum", "%s: JCAMP-DX needs at least two points: %w", s.Source, ErrEmpty)
	}
	y := s.Values
	yunits := "ABSORBANCE"
	switch s.Quantity {
	case PercentT:
		y = make([]float64, n)
		for i, v := range s.Values {
			y[i] = v / 100
		}
		yunits = "TRANSMITTANCE"
	case Transmittance:
		yunits = "TRANSMITTANCE"
	}
	wl := s.Wavelengths
	first, last := wl[0], wl[n-1]
	delta := (last - first) / float64(n-1)
	uniform := delta > 0 && !math.IsInf(delta, 0)
	for i := 0; uniform && i < n; i++ {
		if !(math.Abs(wl[i]-(first+float64(i)*delta)) <= gridUniformTol*delta) {
			uniform = false
		}
	}

	bw := bufio.NewWriter(w)
	title := strings.Join(strings.Fields(strings.ReplaceAll(s.Name, "$$", "$ $")), " ")
	if title == "" {
		title = "untitled"
	}
	origin := oneLine(opt.Origin, "huesolve")
	owner := oneLine(opt.Owner, "not stated")
	g := fmtG
	fmt.Fprintf(bw, "##TITLE=%s\n##JCAMP-DX=4.24\n##DATA TYPE=UV/VIS SPECTRUM\n##ORIGIN=%s\n##OWNER=%s\n", title, origin, owner)
	fmt.Fprintf(bw, "##XUNITS=NANOMETERS\n##YUNITS=%s\n", yunits)
	miny, maxy := y[0], y[0]
	for _, v := range y {
		miny, maxy = min(miny, v), max(maxy, v)
	}
	if !uniform {
		fmt.Fprintf(bw, "##XFACTOR=1\n##YFACTOR=1\n##FIRSTX=%s\n##LASTX=%s\n##NPOINTS=%d\n##FIRSTY=%s\n##MINY=%s\n##MAXY=%s\n##XYPOINTS=(XY..XY)\n",
			g(first), g(last), n, g(y[0]), g(miny), g(maxy))
		for i := range wl {
			fmt.Fprintf(bw, "%s, %s\n", g(wl[i]), g(y[i]))
		}
		bw.WriteString("##END=\n")
		return bw.Flush()
	}
	yf, ye := 1.0, 0 // YFACTOR = 10^ye
	var ints []int64
	if opt.Compressed {
		m := max(math.Abs(miny), math.Abs(maxy))
		if m > 0 {
			e := int(math.Floor(math.Log10(m))) - (jcampDigits - 1)
			ye = e
			yf = math.Pow(10, float64(e))
			if yf == 0 || math.IsInf(yf, 0) || math.IsInf(m/yf, 0) {
				return pkgerr.Errorf("spectrum", "%s: values span beyond what JCAMP-DX integers can hold: %w", s.Source, errNotSupported)
			}
			// Parse back what is written, so reader and writer agree.
			yf, _ = strconv.ParseFloat(g(yf), 64)
		}
		ints = make([]int64, n)
		for i, v := range y {
			ints[i] = int64(math.Round(v / yf))
		}
		// Drop trailing zeros common to every value (data with fewer
		// digits than jcampDigits): shorter lines, the same numbers.
		if m > 0 {
			e := int(math.Floor(math.Log10(m))) - (jcampDigits - 1)
			k := 0
			for k < jcampDigits-1 && allDivisible(ints, 10) {
				for i := range ints {
					ints[i] /= 10
				}
				k++
			}
			if k > 0 {
				ye = e + k
				yf, _ = strconv.ParseFloat(g(math.Pow(10, float64(ye))), 64)
			}
		}
	}
	firsty, ymin, ymax := g(y[0]), g(miny), g(maxy)
	if opt.Compressed {
		// FIRSTY, MINY and MAXY describe the numbers the table holds:
		// integer × 10^ye exactly, not the product in float64
		// (8378 × 1e-05 = 0.08378000000000001).
		lo, hi := ints[0], ints[0]
		for _, v := range ints {
			lo, hi = min(lo, v), max(hi, v)
		}
		firsty, ymin, ymax = scaledInt(ints[0], ye), scaledInt(lo, ye), scaledInt(hi, ye)
	}
	fmt.Fprintf(bw, "##XFACTOR=1\n##YFACTOR=%s\n##FIRSTX=%s\n##LASTX=%s\n##DELTAX=%s\n##NPOINTS=%d\n##FIRSTY=%s\n##MINY=%s\n##MAXY=%s\n##XYDATA=(X++(Y..Y))\n",
		g(yf), g(first), g(last), g(delta), n, firsty, ymin, ymax)
	if opt.Compressed {
		writeDIF(bw, wl, ints)
	} else {
		writeAFFN(bw, wl, y)
	}
	bw.WriteString("##END=\n")
	return bw.Flush()
}

// scaledInt prints v × 10^e in the shortest form that reads back as the
// float64 nearest to that decimal value.
func scaledInt(v int64, e int) string {
	f, err := strconv.ParseFloat(strconv.FormatInt(v, 10)+"e"+strconv.Itoa(e), 64)
	if err != nil { // out of range: cannot happen for the factors chosen above
		f = float64(v) * math.Pow(10, float64(e))
	}
	return fmtG(f)
}

// allDivisible reports whether every element of v is a multiple of d.
func allDivisible(v []int64, d int64) bool {
	for _, x := range v {
		if x%d != 0 {
			return false
		}
	}
	return true
}

func oneLine(s, def string) string {
	s = strings.Join(strings.Fields(strings.ReplaceAll(s, "$$", "$ $")), " ")
	if s == "" {
		return def
	}
	return s
}

// writeAFFN writes X++(Y..Y) lines of plain numbers.
func writeAFFN(bw *bufio.Writer, wl, y []float64) {
	line := make([]byte, 0, 128)
	for i := 0; i < len(y); {
		line = strconv.AppendFloat(line[:0], wl[i], 'g', -1, 64)
		k := 0
		for i < len(y) {
			var tok [32]byte
			t := strconv.AppendFloat(append(tok[:0], ' '), y[i], 'g', -1, 64)
			if k > 0 && len(line)+len(t) > jcampLineMax {
				break
			}
			line = append(line, t...)
			i++
			k++
		}
		line = append(line, '\n')
		bw.Write(line)
	}
}

// appendSQZ appends v in SQZ (dif false) or DIF (dif true) form.
func appendSQZ(b []byte, v int64, dif bool) []byte {
	digits := strconv.AppendInt(nil, v, 10)
	neg := digits[0] == '-'
	if neg {
		digits = digits[1:]
	}
	d := digits[0] - '0'
	var c byte
	switch {
	case !dif && d == 0:
		c = '@'
	case !dif && !neg:
		c = 'A' + d - 1
	case !dif:
		c = 'a' + d - 1
	case d == 0:
		c = '%'
	case !neg:
		c = 'J' + d - 1
	default:
		c = 'j' + d - 1
	}
	b = append(b, c)
	return append(b, digits[1:]...)
}

// appendDUP appends a DUP repeat count (counting the original).
func appendDUP(b []byte, count int) []byte {
	digits := strconv.AppendInt(nil, int64(count), 10)
	d := digits[0] - '0'
	c := byte('s')
	if d <= 8 {
		c = 'S' + d - 1
	}
	b = append(b, c)
	return append(b, digits[1:]...)
}

// writeDIF writes X++(Y..Y) lines in DIF form with DUP repeats. Each line
// starts with the X and SQZ value of its first point; a line ending in DIF
// form is followed by a line repeating its last point (the Y-value check),
// and the table closes with such a check line.
func writeDIF(bw *bufio.Writer, wl []float64, ints []int64) {
	n := len(ints)
	line := make([]byte, 0, 128)
	p := 0 // index of the point that opens the line
	for {
		line = strconv.AppendFloat(line[:0], wl[p], 'g', -1, 64)
		line = append(line, ' ')
		line = appendSQZ(line, ints[p], false)
		q := p
		for q < n-1 {
			d := ints[q+1] - ints[q]
			r := 1
			for q+r < n-1 && ints[q+r+1]-ints[q+r] == d {
				r++
			}
			var tok [48]byte
			t := appendSQZ(tok[:0], d, true)
			if r > 1 {
				t = appendDUP(t, r)
			}
			if len(line)+len(t) > jcampLineMax {
				if q > p {
					break
				}
				// A single token longer than the line: shorten the run.
				for r > 1 && len(line)+len(t) > jcampLineMax {
					r--
					t = appendSQZ(tok[:0], d, true)
					if r > 1 {
						t = appendDUP(t, r)
					}
				}
			}
			line = append(line, t...)
			q += r
		}
		line = append(line, '\n')
		bw.Write(line)
		if q == p {
			return // a line of one point: the check line that closes the table
		}
		p = q
	}
}
