package report

import (
	"encoding/xml"
	"fmt"
	"image/color"
	"io"
	"os"
	"strings"
	"testing"
)

// svgDoc is what the plot tests read back from an SVG file written by
// gonum/plot: the text of every <text> element in order (titles, axis
// labels, tick labels, legend entries) and the number of <path> elements
// per style attribute (a series' lines and glyphs carry its colour).
type svgDoc struct {
	texts  []string
	styles map[string]int
}

// readSVG parses the SVG file at path; a file that is not well-formed
// XML with an <svg> root fails the test.
func readSVG(t *testing.T, path string) svgDoc {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	doc := svgDoc{styles: map[string]int{}}
	dec := xml.NewDecoder(f)
	root := ""
	var inText bool
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: %v", path, err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = e.Name.Local
			}
			switch e.Name.Local {
			case "text":
				inText = true
				text.Reset()
			case "path":
				style := ""
				for _, a := range e.Attr {
					if a.Name.Local == "style" {
						style = a.Value
					}
				}
				doc.styles[style]++
			}
		case xml.CharData:
			if inText {
				text.Write(e)
			}
		case xml.EndElement:
			if e.Name.Local == "text" {
				inText = false
				doc.texts = append(doc.texts, text.String())
			}
		}
	}
	if root != "svg" {
		t.Fatalf("%s: root element %q, want svg", path, root)
	}
	return doc
}

// count is the number of text elements equal to s.
func (d svgDoc) count(s string) int {
	n := 0
	for _, x := range d.texts {
		if x == s {
			n++
		}
	}
	return n
}

// hasPrefix reports whether a text element starts with s.
func (d svgDoc) hasPrefix(s string) bool {
	for _, x := range d.texts {
		if strings.HasPrefix(x, s) {
			return true
		}
	}
	return false
}

// paths is the number of <path> elements whose style is exactly style.
func (d svgDoc) paths(style string) int { return d.styles[style] }

// hex writes c as gonum/plot's SVG writer does: #RRGGBB, upper case.
func hex(c color.Color) string {
	r, g, b, _ := c.RGBA()
	return fmt.Sprintf("#%02X%02X%02X", r>>8, g>>8, b>>8)
}

// stroke is the style of an unfilled path drawn in c at width (points;
// 0 for gonum's default of 1, which the writer leaves out).
func stroke(c color.Color, width float64) string {
	s := "fill:none;stroke:" + hex(c)
	if width != 0 {
		s += fmt.Sprintf(";stroke-width:%g", width)
	}
	return s
}
