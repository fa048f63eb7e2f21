package plot

import (
	"fmt"
	"math"
	"slices"

	"warmfit/lattice"
)

// Geometry is what a lattice drawing needs: where the sites are, which
// pairs are bonded, and how a periodic lattice wraps. Make one from a
// *lattice.Lattice with LatticeGeometry, or fill it in for any graph.
type Geometry struct {
	Name   string      // shown in captions, such as a lattice specification
	Coords [][]float64 // one point per site, all with 2 or all with 3 components
	NN     []lattice.Bond
	NNN    []lattice.Bond
	// NNNInteract marks the NNN bonds as part of the interaction graph;
	// they are drawn darker.
	NNNInteract bool
	// Translations are the lattice vectors under which a periodic
	// lattice repeats, one per periodic axis, with as many components as
	// the coordinates. A bond that is shorter through one of them than
	// directly wraps around the boundary and is drawn as two stubs.
	Translations [][]float64
	// CellSites is the number of sites per unit cell, numbered so that
	// site i sits at position i mod CellSites of its cell; sites are
	// filled by position. 0 means 1.
	CellSites int
}

// LatticeGeometry returns the geometry of a lattice, with the periodic
// translations of a built periodic lattice.
func LatticeGeometry(l *lattice.Lattice) Geometry {
	g := Geometry{
		Name:        l.Spec.String(),
		Coords:      l.Coords,
		NN:          l.NN,
		NNN:         l.NNN,
		NNNInteract: l.Spec.Shells == 2,
		CellSites:   1,
	}
	if l.Spec.Kind == "graph" {
		return g
	}
	cells := 1
	for _, n := range l.Spec.Size {
		cells *= n
	}
	if cells == 0 || l.NumSites()%cells != 0 {
		return g
	}
	g.CellSites = l.NumSites() / cells
	if l.Spec.Boundary == lattice.Periodic {
		g.Translations = periodicTranslations(l, g.CellSites)
	}
	return g
}

// periodicTranslations reads the Bravais vectors off a built lattice,
// whose sites are numbered b + CellSites*cell with the cell index x
// fastest (lattice.Build): the first site of the next cell along an axis
// lies one Bravais vector from site 0. A periodic lattice repeats after
// size times that vector.
func periodicTranslations(l *lattice.Lattice, cellSites int) [][]float64 {
	var out [][]float64
	stride := 1
	for _, size := range l.Spec.Size {
		if size >= 2 {
			next := l.Coords[cellSites*stride]
			t := make([]float64, len(next))
			for k := range t {
				t[k] = float64(size) * (next[k] - l.Coords[0][k])
			}
			out = append(out, t)
		}
		stride *= size
	}
	return out
}

// check reports the first malformed part of the geometry.
func (g Geometry) check() error {
	dim := 0
	for i, c := range g.Coords {
		if i == 0 {
			dim = len(c)
		}
		if len(c) != dim || (dim != 2 && dim != 3) {
			return fmt.Errorf("site %d has %d coordinates, want 2 or 3 like site 0", i, len(c))
		}
		for _, v := range c {
			if !finite(v) {
				return fmt.Errorf("site %d: coordinate %v: %w", i, v, errNonFinite)
			}
		}
	}
	for _, shell := range [][]lattice.Bond{g.NN, g.NNN} {
		for _, b := range shell {
			if b.I < 0 || b.J < 0 || b.I >= len(g.Coords) || b.J >= len(g.Coords) || b.I == b.J {
				return fmt.Errorf("bond %d-%d: not a pair of the %d sites", b.I, b.J, len(g.Coords))
			}
		}
	}
	for _, t := range g.Translations {
		if len(t) != dim {
			return fmt.Errorf("translation %v has %d components, the sites %d", t, len(t), dim)
		}
		for _, v := range t {
			if !finite(v) {
				return fmt.Errorf("translation %v: %w", t, errNonFinite)
			}
		}
	}
	if g.CellSites < 0 {
		return fmt.Errorf("%d sites per cell", g.CellSites)
	}
	return nil
}

// obliqueZ is the drawing-plane image of the unit z vector: up and to
// the right at 30 degrees, foreshortened by half.
var obliqueZ = [2]float64{0.5 * math.Cos(math.Pi/6), 0.5 * math.Sin(math.Pi/6)}

// project maps a point to the drawing plane, y up.
func project(c []float64) [2]float64 {
	p := [2]float64{c[0], c[1]}
	if len(c) == 3 {
		p[0] += obliqueZ[0] * c[2]
		p[1] += obliqueZ[1] * c[2]
	}
	return p
}

// segment is a drawn piece of a bond, in projected lattice units: the
// whole bond, or one of the two stubs of a bond that wraps around.
type segment struct {
	bond lattice.Bond
	a, b [2]float64
	nnn  bool
	stub bool
}

// segments returns the drawn pieces of the bonds: NNN first so that NN
// bonds are painted over them.
func (g Geometry) segments(pts [][2]float64) []segment {
	var out []segment
	add := func(b lattice.Bond, nnn bool) {
		d, wrapped := g.bondVector(b)
		if !wrapped {
			out = append(out, segment{b, pts[b.I], pts[b.J], nnn, false})
			return
		}
		half := [2]float64{d[0] / 2, d[1] / 2}
		out = append(out,
			segment{b, pts[b.I], [2]float64{pts[b.I][0] + half[0], pts[b.I][1] + half[1]}, nnn, true},
			segment{b, pts[b.J], [2]float64{pts[b.J][0] - half[0], pts[b.J][1] - half[1]}, nnn, true})
	}
	for _, b := range g.NNN {
		add(b, true)
	}
	for _, b := range g.NN {
		add(b, false)
	}
	return out
}

// bondVector returns the projected displacement from b.I to b.J along
// the shortest periodic image, and whether that image crosses the
// boundary.
func (g Geometry) bondVector(b lattice.Bond) ([2]float64, bool) {
	ci, cj := g.Coords[b.I], g.Coords[b.J]
	direct := make([]float64, len(ci))
	for k := range direct {
		direct[k] = cj[k] - ci[k]
	}
	best, bestLen, wrapped := slices.Clone(direct), norm(direct), false
	// Every combination of -1, 0, +1 translations per periodic axis.
	combos := 1
	for range g.Translations {
		combos *= 3
	}
	v := make([]float64, len(direct))
	for c := range combos {
		copy(v, direct)
		k := c
		for _, t := range g.Translations {
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

// closestSeparation returns the smallest positive distance between two
// drawn sites: over all pairs for up to a few thousand sites, over the
// bonds beyond that; 1 when there is none.
func closestSeparation(pts [][2]float64, bonds []lattice.Bond) float64 {
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

// caption summarises what a lattice drawing shows.
func (g Geometry) caption() string {
	s := fmt.Sprintf("%s: %d sites, %d NN bonds (solid), %d NNN bonds (dashed", g.Name, len(g.Coords), len(g.NN), len(g.NNN))
	if g.NNNInteract {
		s += ", interacting"
	} else if len(g.NNN) > 0 {
		s += ", no terms"
	}
	s += ")"
	if len(g.Coords) > 0 && len(g.Coords[0]) == 3 {
		s += ", z drawn obliquely"
	}
	if g.wraps() {
		s += "; the stubs at the edges are bonds that wrap around the periodic boundary"
	}
	return s
}

// wraps says whether any bond is drawn as two stubs.
func (g Geometry) wraps() bool {
	for _, bonds := range [][]lattice.Bond{g.NN, g.NNN} {
		for _, b := range bonds {
			if _, wrapped := g.bondVector(b); wrapped {
				return true
			}
		}
	}
	return false
}
