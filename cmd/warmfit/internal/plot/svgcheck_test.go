package plot

import (
	"bytes"
	"encoding/xml"
	"io"
	"strconv"
	"strings"
	"testing"
)

// numericAttrs are the attributes that must hold one finite number.
var numericAttrs = map[string]bool{
	"x": true, "y": true, "width": true, "height": true, "cx": true, "cy": true, "r": true,
	"x1": true, "y1": true, "x2": true, "y2": true, "font-size": true, "stroke-width": true,
	"dy": true, "fill-opacity": true, "stroke-opacity": true,
}

// svgStats is what checkSVG saw in a document.
type svgStats struct {
	elements map[string]int
	texts    []string // character data of <text> elements, tspans joined
}

// checkSVG decodes the whole document with encoding/xml and checks that
// its root is <svg> and that no attribute holds NaN or Inf, every
// numeric attribute a finite number.
func checkSVG(t *testing.T, name string, doc []byte) svgStats {
	t.Helper()
	st := svgStats{elements: map[string]int{}}
	dec := xml.NewDecoder(bytes.NewReader(doc))
	depth, inText := 0, 0
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: not well-formed XML: %v", name, err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			if depth == 0 && el.Name.Local != "svg" {
				t.Fatalf("%s: root element %q, want svg", name, el.Name.Local)
			}
			depth++
			st.elements[el.Name.Local]++
			for _, a := range el.Attr {
				low := strings.ToLower(a.Value)
				if strings.Contains(low, "nan") || strings.Contains(low, "inf") {
					t.Errorf("%s: <%s %s=%q>", name, el.Name.Local, a.Name.Local, a.Value)
				}
				if numericAttrs[a.Name.Local] {
					if _, err := strconv.ParseFloat(a.Value, 64); err != nil {
						t.Errorf("%s: <%s %s=%q> is not a number", name, el.Name.Local, a.Name.Local, a.Value)
					}
				}
			}
			if el.Name.Local == "text" {
				inText++
				text.Reset()
			}
		case xml.EndElement:
			depth--
			if el.Name.Local == "text" {
				inText--
				st.texts = append(st.texts, text.String())
			}
		case xml.CharData:
			if inText > 0 {
				text.Write(el)
			}
		}
	}
	if depth != 0 {
		t.Fatalf("%s: unbalanced elements", name)
	}
	return st
}

// render writes a document, failing the test on an error.
func render(t *testing.T, name string, d *Document) []byte {
	t.Helper()
	var b bytes.Buffer
	n, err := d.WriteTo(&b)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	if n != int64(b.Len()) {
		t.Fatalf("%s: WriteTo reported %d bytes, wrote %d", name, n, b.Len())
	}
	return b.Bytes()
}
