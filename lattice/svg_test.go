package lattice

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"strconv"
	"testing"
)

// The drawing is well-formed XML with one labelled circle per site and
// one line per bond, two half-length stubs for each bond that wraps
// around a periodic boundary (a bond longer than its shell distance:
// 1 for NN, sqrt2 for NNN on the square lattice; sqrt3 on honeycomb NNN).
func TestWriteSVG(t *testing.T) {
	tests := []struct {
		spec       string
		nnLen, nnn float64
	}{
		{"square:4x4", 1, math.Sqrt2},
		{"square:4x4:periodic", 1, math.Sqrt2},
		{"honeycomb:3x3:periodic:shells=2", 1, math.Sqrt(3)},
		{"kagome:2x3", 1, math.Sqrt(3)},
		{"cubic:3x3x3:periodic", 1, math.Sqrt2},
		{"triangular:4x3", 1, math.Sqrt(3)},
	}
	for _, tt := range tests {
		l := mustBuild(t, tt.spec)
		var buf bytes.Buffer
		if err := l.WriteSVG(&buf); err != nil {
			t.Fatal(err)
		}
		wantLines := len(l.NN) + len(l.NNN)
		for _, shell := range []struct {
			bonds []Bond
			d     float64
		}{{l.NN, tt.nnLen}, {l.NNN, tt.nnn}} {
			for _, b := range shell.bonds {
				if dist(l.Coords[b.I], l.Coords[b.J]) > shell.d+1e-9 {
					wantLines++
				}
			}
		}
		circles, lines, labels := 0, 0, map[int]bool{}
		dec := xml.NewDecoder(&buf)
		inText := false
		for {
			tok, err := dec.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s: invalid SVG: %v", tt.spec, err)
			}
			switch el := tok.(type) {
			case xml.StartElement:
				switch el.Name.Local {
				case "circle":
					circles++
				case "line":
					lines++
				case "text":
					inText = true
				}
			case xml.EndElement:
				inText = false
			case xml.CharData:
				if inText {
					if k, err := strconv.Atoi(string(el)); err == nil {
						labels[k] = true
					}
				}
			}
		}
		if circles != l.NumSites() || len(labels) != l.NumSites() || lines != wantLines {
			t.Errorf("%s: %d circles, %d labels, %d lines; want %d, %d, %d",
				tt.spec, circles, len(labels), lines, l.NumSites(), l.NumSites(), wantLines)
		}
	}
}

func dist(a, b []float64) float64 {
	s := 0.0
	for k := range a {
		s += (a[k] - b[k]) * (a[k] - b[k])
	}
	return math.Sqrt(s)
}

func TestWriteSVGGraphs(t *testing.T) {
	one, err := FromGraph([][]float64{{0, 0}}, nil, 1)
	if err != nil {
		t.Fatal(err)
	}
	same, err := FromGraph([][]float64{{0, 0}, {0, 0}, {1, 0}}, []Bond{{0, 1}, {1, 2}}, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range []*Lattice{one, same} {
		var buf bytes.Buffer
		if err := l.WriteSVG(&buf); err != nil {
			t.Fatal(err)
		}
		if err := xml.Unmarshal(buf.Bytes(), new(struct{})); err != nil {
			t.Errorf("%v: invalid SVG: %v", l.Spec, err)
		}
	}
}
