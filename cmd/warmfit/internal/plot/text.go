package plot

import (
	"strings"
	"unicode/utf8"
)

// Anchor is the horizontal alignment of text about its point.
type Anchor int

const (
	Start  Anchor = iota // text begins at the point (the zero value)
	Middle               // text is centred on the point
	End                  // text ends at the point
)

func (a Anchor) svg() string {
	switch a {
	case Middle:
		return "middle"
	case End:
		return "end"
	}
	return "start"
}

// TextStyle is how a label is set. The zero value is body text in the
// house ink, starting at its point.
type TextStyle struct {
	Size   float64 // font size in pixels; 0 means the house note size
	Color  Color   // the zero Color stands for the house ink
	Anchor Anchor
	Bold   bool
	Italic bool
	Rotate float64 // degrees clockwise about the point
	// Halo outlines the letters in the paper colour, to keep a label
	// legible where it crosses lines.
	Halo bool
}

// Text writes s with its baseline at y, aligned about x by t.Anchor.
func (d *Document) Text(x, y float64, s string, t TextStyle) {
	d.richText(x, y, plain(s), t)
}

func (d *Document) richText(x, y float64, r richText, t TextStyle) {
	if t.Size == 0 {
		t.Size = sizeNote
	}
	e := d.open("text").num("x", x).num("y", y).num("font-size", t.Size)
	if t.Anchor != Start {
		e.str("text-anchor", t.Anchor.svg())
	}
	e.str("fill", ink(t.Color).Hex())
	if t.Bold {
		e.str("font-weight", "bold")
	}
	if t.Italic {
		e.str("font-style", "italic")
	}
	if t.Rotate != 0 {
		e.transform("rotate", t.Rotate, x, y)
	}
	if t.Halo {
		e.str("stroke", paperColor.Hex()).num("stroke-width", 3).str("stroke-linejoin", "round").str("paint-order", "stroke")
	}
	if len(r) == 1 && !r[0].super {
		e.text(r[0].text)
		return
	}
	d.body.WriteString(">")
	for _, s := range r {
		if s.super {
			// A raised, smaller run; dy moves back down after it so that
			// following text sits on the baseline again.
			rise := 0.38 * t.Size
			d.body.WriteString(`<tspan dy="` + mustNumber(-rise) + `" font-size="` + mustNumber(0.72*t.Size) + `">`)
			escapeText(&d.body, s.text)
			d.body.WriteString(`</tspan><tspan dy="` + mustNumber(rise) + `"></tspan>`)
			continue
		}
		escapeText(&d.body, s.text)
	}
	d.body.WriteString("</text>\n")
}

// Heading writes a figure title at the top left of the document and an
// optional subtitle below it, and returns the y coordinate below them
// where content may start.
func (d *Document) Heading(title, subtitle string) float64 {
	const left = 24
	y := 12.0 + sizeFigureTitle
	d.Text(left, y, title, TextStyle{Size: sizeFigureTitle, Bold: true})
	y += sizeFigureTitle * 0.5
	if subtitle != "" {
		for _, line := range wrap(subtitle, d.width-2*left, sizeNote) {
			y += sizeNote * lineHeight
			d.Text(left, y, line, TextStyle{Size: sizeNote, Color: mutedColor})
		}
	}
	return y + 14
}

// Subheading writes a title over a part of a figure that is not a
// panel (a lattice map, a group of colour bars) in the style of a
// panel's title, its baseline at y.
func (d *Document) Subheading(x, y float64, title string) {
	d.Text(x, y, title, TextStyle{Size: sizePanelTitle, Bold: true})
}

// Note writes text in the muted house ink from (x, y) on, wrapped to
// width, and returns the y coordinate of the line after it.
func (d *Document) Note(x, y, width float64, text string) float64 {
	for _, line := range wrap(text, width, sizeNote) {
		d.Text(x, y, line, TextStyle{Size: sizeNote, Color: mutedColor})
		y += sizeNote * lineHeight
	}
	return y
}

// wrap breaks text into lines no wider than width at the given size,
// breaking at spaces; a word wider than the line stands alone.
func wrap(text string, width, size float64) []string {
	var lines []string
	for _, para := range strings.Split(text, "\n") {
		line := ""
		for _, w := range strings.Fields(para) {
			try := w
			if line != "" {
				try = line + " " + w
			}
			if line != "" && textWidth(try, size, false) > width {
				lines = append(lines, line)
				try = w
			}
			line = try
		}
		lines = append(lines, line)
	}
	return lines
}

// textWidth estimates the advance width of s at the given font size,
// from the advance widths of DejaVu Sans (in 1/2048 em; the widest face
// of the house font stack, so that estimates err on the generous side).
func textWidth(s string, size float64, bold bool) float64 {
	units := 0
	for _, r := range s {
		units += advance(r)
	}
	w := float64(units) / 2048 * size
	if bold {
		w *= 1.08
	}
	return w
}

func (r richText) width(size float64) float64 {
	w := 0.0
	for _, s := range r {
		if s.super {
			w += textWidth(s.text, 0.72*size, false)
		} else {
			w += textWidth(s.text, size, false)
		}
	}
	return w
}

// advanceASCII holds the DejaVu Sans advance widths of the printable
// ASCII characters from space to tilde.
var advanceASCII = [95]int{
	651, 821, 942, 1716, 1303, 1946, 1597, 563, 799, 799, 1024, 1716, 651, 739, 651, 690, // space to /
	1303, 1303, 1303, 1303, 1303, 1303, 1303, 1303, 1303, 1303, // digits
	690, 690, 1716, 1716, 1716, 1087, 2048, // : to @
	1401, 1405, 1430, 1577, 1294, 1178, 1587, 1540, 604, 604, 1343, 1141, 1767, // A to M
	1532, 1612, 1235, 1612, 1423, 1300, 1251, 1499, 1401, 2025, 1403, 1251, 1403, // N to Z
	799, 690, 799, 1716, 1024, 1024, // [ to `
	1255, 1300, 1126, 1300, 1260, 721, 1300, 1298, 569, 569, 1186, 569, 1995, // a to m
	1298, 1253, 1300, 1300, 842, 1067, 803, 1298, 1212, 1675, 1212, 1212, 1075, // n to z
	1303, 690, 1303, 1716, // { to ~
}

func advance(r rune) int {
	if r >= ' ' && r <= '~' {
		return advanceASCII[r-' ']
	}
	if r == utf8.RuneError || r < ' ' {
		return 0
	}
	return 1400 // Greek letters, signs and the like: about a capital
}
