package lattice

import (
	"bufio"
	"fmt"
	"html"
	"io"
	"math"
	"slices"
)

// Drawing geometry, in SVG pixels.
const (
	svgSpacing = 56 // closest pair of sites
	svgMargin  = 24
	svgCaption = 22 // height of the caption line
)

// oblique projection of the z axis: up and to the right, foreshortened.
var svgObliqueZ = [2]float64{0.5 * math.Cos(math.Pi/6), 0.5 * math.Sin(math.Pi/6)}

// Fill colours of the sites of a unit cell, by position in the cell.
var svgSiteFill = []string{"#ffffff", "#dbe9f6", "#fbe3c8"}

// WriteSVG draws the lattice: sites as circles labelled with their
// index, nearest-neighbour bonds solid, next-nearest-neighbour bonds
// dashed (darker when they belong to the interaction graph), and a
// caption. 3-D coordinates are drawn in oblique projection (z up and to
// the right, halved). The scale puts the closest two sites 56 px apart,
// so labels never overlap and a few hundred sites stay readable. On a
// periodic lattice a bond that wraps around is drawn as two half-length
// stubs pointing across the boundary.
func (l *Lattice) WriteSVG(w io.Writer) error {
	n := l.NumSites()
	pts := make([][2]float64, n)
	for i, c := range l.Coords {
		pts[i] = project(c)
	}
	scale := svgSpacing / closestSeparation(pts, l.NN)

	type segment struct {
		a, b [2]float64
		nnn  bool
		stub bool
	}
	var segs []segment
	wrapT := l.periodicTranslations()
	addBond := func(b Bond, nnn bool) {
		d, wrapped := l.bondVector(b, wrapT)
		if !wrapped {
			segs = append(segs, segment{pts[b.I], pts[b.J], nnn, false})
			return
		}
		half := [2]float64{d[0] / 2, d[1] / 2}
		segs = append(segs,
			segment{pts[b.I], [2]float64{pts[b.I][0] + half[0], pts[b.I][1] + half[1]}, nnn, true},
			segment{pts[b.J], [2]float64{pts[b.J][0] - half[0], pts[b.J][1] - half[1]}, nnn, true})
	}
	for _, b := range l.NNN {
		addBond(b, true)
	}
	for _, b := range l.NN {
		addBond(b, false)
	}

	// Bounding box of sites and stubs, in lattice units.
	lo := [2]float64{math.Inf(1), math.Inf(1)}
	hi := [2]float64{math.Inf(-1), math.Inf(-1)}
	grow := func(p [2]float64) {
		for k := range p {
			lo[k], hi[k] = min(lo[k], p[k]), max(hi[k], p[k])
		}
	}
	for _, p := range pts {
		grow(p)
	}
	for _, s := range segs {
		grow(s.b)
	}
	radius, font := labelSize(n)
	pad := svgMargin + radius
	// The caption may be wider than the lattice; 7 px per character
	// covers 12 px sans-serif text.
	caption := l.caption()
	content := (hi[0]-lo[0])*scale + 2*pad
	width := math.Max(content, 7*float64(len(caption))+svgMargin)
	left := pad + (width-content)/2
	height := (hi[1]-lo[1])*scale + 2*pad + svgCaption
	// Lattice y points up, SVG y down.
	at := func(p [2]float64) (float64, float64) {
		return left + (p[0]-lo[0])*scale, pad + (hi[1]-p[1])*scale
	}

	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%.0f\" height=\"%.0f\" viewBox=\"0 0 %.0f %.0f\">\n",
		width, height, width, height)
	fmt.Fprintf(bw, "<title>%s</title>\n", html.EscapeString(l.Spec.String()))
	fmt.Fprintf(bw, "<rect width=\"100%%\" height=\"100%%\" fill=\"white\"/>\n")
	nnnStroke := "#9aa5b1"
	if l.shells() == 2 {
		nnnStroke = "#4a6fa5"
	}
	fmt.Fprintf(bw, "<g stroke-linecap=\"round\">\n")
	for _, s := range segs {
		x1, y1 := at(s.a)
		x2, y2 := at(s.b)
		style := "stroke=\"#333333\" stroke-width=\"2.5\""
		if s.nnn {
			style = fmt.Sprintf("stroke=\"%s\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"", nnnStroke)
		}
		if s.stub {
			style += " stroke-opacity=\"0.55\""
		}
		fmt.Fprintf(bw, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" %s/>\n", x1, y1, x2, y2, style)
	}
	fmt.Fprintf(bw, "</g>\n")

	// Sites far along z first, so nearer ones are drawn on top.
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	if l.Dim() == 3 {
		slices.SortStableFunc(order, func(a, b int) int {
			za, zb := l.Coords[a][2], l.Coords[b][2]
			switch {
			case za > zb:
				return -1
			case za < zb:
				return 1
			}
			return 0
		})
	}
	nb := 1
	if uc, ok := unitCells[l.Spec.Kind]; ok {
		nb = len(uc.Basis)
	}
	fmt.Fprintf(bw, "<g font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\" font-size=\"%.1f\" text-anchor=\"middle\">\n", font)
	for _, i := range order {
		x, y := at(pts[i])
		fill := svgSiteFill[(i%nb)%len(svgSiteFill)]
		fmt.Fprintf(bw, "<circle cx=\"%.1f\" cy=\"%.1f\" r=\"%.1f\" fill=\"%s\" stroke=\"#222222\" stroke-width=\"1.5\"/>\n", x, y, radius, fill)
		// dy centres the digits vertically; dominant-baseline is not
		// honoured by every renderer.
		fmt.Fprintf(bw, "<text x=\"%.1f\" y=\"%.1f\" dy=\"%.1f\">%d</text>\n", x, y, 0.35*font, i)
	}
	fmt.Fprintf(bw, "</g>\n")
	fmt.Fprintf(bw, "<text x=\"%d\" y=\"%.1f\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\" font-size=\"12\" fill=\"#333333\">%s</text>\n",
		svgMargin/2, height-svgCaption/2, html.EscapeString(caption))
	fmt.Fprintf(bw, "</svg>\n")
	return bw.Flush()
}

// caption summarises what the drawing shows.
func (l *Lattice) caption() string {
	s := fmt.Sprintf("%s: %d sites, %d NN bonds (solid), %d NNN bonds (dashed", l.Spec, l.NumSites(), len(l.NN), len(l.NNN))
	if l.shells() == 2 {
		s += ", interacting"
	}
	s += ")"
	if l.Dim() == 3 {
		s += ", z drawn obliquely"
	}
	return s
}

// project maps a site to the drawing plane.
func project(c []float64) [2]float64 {
	p := [2]float64{c[0], c[1]}
	if len(c) == 3 {
		p[0] += svgObliqueZ[0] * c[2]
		p[1] += svgObliqueZ[1] * c[2]
	}
	return p
}

// closestSeparation returns the smallest positive distance between two
// drawn sites: over all pairs for up to a few thousand sites, over the
// bonds beyond that.
func closestSeparation(pts [][2]float64, bonds []Bond) float64 {
	best := math.Inf(1)
	dist := func(a, b [2]float64) float64 { return math.Hypot(a[0]-b[0], a[1]-b[1]) }
	if len(pts) <= 3000 {
		for i := range pts {
			for j := i + 1; j < len(pts); j++ {
				if d := dist(pts[i], pts[j]); d > 1e-9 && d < best {
					best = d
				}
			}
		}
	} else {
		for _, b := range bonds {
			if d := dist(pts[b.I], pts[b.J]); d > 1e-9 && d < best {
				best = d
			}
		}
	}
	if math.IsInf(best, 1) {
		return 1
	}
	return best
}

// labelSize returns the circle radius and font size for labels of up to
// n-1, wide enough for the longest index.
func labelSize(n int) (radius, font float64) {
	switch digits := len(fmt.Sprint(max(n-1, 0))); {
	case digits <= 2:
		return 14, 12
	case digits == 3:
		return 15, 10.5
	default:
		return 17, 9
	}
}

// periodicTranslations returns the lattice translations of a periodic
// built lattice (size times Bravais vector per axis); nil otherwise.
func (l *Lattice) periodicTranslations() [][]float64 {
	uc, ok := unitCells[l.Spec.Kind]
	if !ok || l.Spec.Boundary != Periodic {
		return nil
	}
	var t [][]float64
	for a, size := range l.Spec.Size {
		v := make([]float64, len(uc.A[a]))
		for d := range v {
			v[d] = float64(size) * uc.A[a][d]
		}
		t = append(t, v)
	}
	return t
}

// bondVector returns the projected displacement from b.I to b.J along
// the shortest periodic image, and whether that image crosses the
// boundary.
func (l *Lattice) bondVector(b Bond, trans [][]float64) ([2]float64, bool) {
	ci, cj := l.Coords[b.I], l.Coords[b.J]
	direct := make([]float64, len(ci))
	for d := range direct {
		direct[d] = cj[d] - ci[d]
	}
	best, bestLen, wrapped := slices.Clone(direct), norm(direct), false
	// Every combination of -1, 0, +1 translations per axis.
	combos := 1
	for range trans {
		combos *= 3
	}
	v := make([]float64, len(direct))
	for c := 0; c < combos; c++ {
		copy(v, direct)
		k := c
		for _, t := range trans {
			m := float64(k%3 - 1)
			k /= 3
			for d := range v {
				v[d] += m * t[d]
			}
		}
		if n := norm(v); n < bestLen-1e-9 {
			copy(best, v)
			bestLen, wrapped = n, true
		}
	}
	return project(best), wrapped
}

func norm(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x * x
	}
	return math.Sqrt(s)
}
