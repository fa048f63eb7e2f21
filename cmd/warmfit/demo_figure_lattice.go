package main

import (
	"fmt"
	"math"

	"warmfit/cmd/warmfit/internal/plot"
	"warmfit/lattice"
)

// figLattice draws the array four times: coloured by the fitted XX, YY
// and ZZ couplings on the bonds with the X and Z fields on the sites,
// and by the signed pulls, each panel with the checked patch outlined.
func (d *demoRun) figLattice() (*plot.Document, error) {
	r := d.array.Recovery
	values := latticeValuesOf(r)
	panels := []struct {
		title      string
		bond, site string // kinds of term; "" for none
	}{
		{"XX couplings, X fields", "XX", "X"},
		{"YY couplings (no Y field)", "YY", ""},
		{"ZZ couplings, Z fields", "ZZ", "Z"},
	}
	const cellW = 356.0
	const cellH = 20 + latticeBox + plot.ColorBarAbove + 10 + plot.ColorBarBelow + 12
	// The heading takes a title and one line of subtitle, about 64 px.
	doc := plot.New(2*cellW+48, 64+2*cellH+10, "the fitted array")
	top := doc.Heading(fmt.Sprintf("The fitted %dx%d array: couplings on the bonds, fields on the sites", d.sc.Width, d.sc.Height),
		fmt.Sprintf("bond width grows with |coupling|; the dashed square is the %dx%d patch checked against exact diagonalisation", d.sc.Patch, d.sc.Patch))
	cells := plot.Rect{X: 24, Y: top, W: 2 * cellW, H: 2 * cellH}.Grid(2, 2, 0, 0)
	g := plot.LatticeGeometry(d.array.Model.Lattice)
	for i, spec := range panels {
		layers, maps, err := values.layers(spec.bond, spec.site)
		if err != nil {
			return nil, err
		}
		d.latticePanel(doc, cells[i], spec.title, g, layers, maps)
	}
	pulls, err := values.pullLayers()
	if err != nil {
		return nil, err
	}
	d.latticePanel(doc, cells[3], "pulls (signed): worst term of each bond and site", g, pulls, []plot.ColorMap{pulls.BondMap})
	return doc, nil
}

// latticeBox is the height of one lattice map.
const latticeBox = 320.0

// latticePanel draws one lattice map in cell with its colour bars below.
func (d *demoRun) latticePanel(doc *plot.Document, cell plot.Rect, title string, g plot.Geometry, layers plot.LatticeLayers, maps []plot.ColorMap) {
	doc.Subheading(cell.X, cell.Y+12, title)
	box := plot.Rect{X: cell.X, Y: cell.Y + 20, W: cell.W - 16, H: latticeBox}
	v := doc.Lattice(box, g, layers)
	v.Outline(d.patch.Sites, "patch")
	// Two bars side by side, far enough apart that their end labels,
	// centred on the ends, do not meet.
	const gap = 40.0
	barW := (box.W - 20 - gap) / 2
	for k, m := range maps {
		doc.ColorBar(plot.Rect{X: box.X + 10 + float64(k)*(barW+gap), Y: box.Bottom() + 10 + plot.ColorBarAbove, W: barW, H: 10}, m)
	}
}

// latticeValues are the fitted coefficients and the signed pulls by kind,
// keyed by bond and by site.
type latticeValues struct {
	bonds    map[string]map[lattice.Bond]float64
	sites    map[string]map[int]float64
	bondPull map[lattice.Bond]float64 // the pull of largest magnitude on the bond
	sitePull map[int]float64
}

func latticeValuesOf(r *demoRecovery) *latticeValues {
	v := &latticeValues{bonds: map[string]map[lattice.Bond]float64{}, sites: map[string]map[int]float64{},
		bondPull: map[lattice.Bond]float64{}, sitePull: map[int]float64{}}
	keep := func(old float64, seen bool, z float64) float64 {
		if !seen || math.Abs(z) > math.Abs(old) {
			return z
		}
		return old
	}
	for k, t := range r.Terms {
		z := r.Z[k]
		switch len(t.Sites) {
		case 2:
			b := lattice.Bond{I: min(t.Sites[0], t.Sites[1]), J: max(t.Sites[0], t.Sites[1])}
			if v.bonds[t.Pauli] == nil {
				v.bonds[t.Pauli] = map[lattice.Bond]float64{}
			}
			v.bonds[t.Pauli][b] = t.Coeff
			old, seen := v.bondPull[b]
			v.bondPull[b] = keep(old, seen, z)
		case 1:
			i := t.Sites[0]
			if v.sites[t.Pauli] == nil {
				v.sites[t.Pauli] = map[int]float64{}
			}
			v.sites[t.Pauli][i] = t.Coeff
			old, seen := v.sitePull[i]
			v.sitePull[i] = keep(old, seen, z)
		}
	}
	return v
}

// layers colours the bonds by one kind of coupling and the sites by one
// kind of field. Both are coefficients in the same unit, so a panel with
// both shares one scale: one colour means one value anywhere in it.
func (v *latticeValues) layers(bond, site string) (plot.LatticeLayers, []plot.ColorMap, error) {
	ls := plot.LatticeLayers{WidenBonds: true}
	bonds, sites := v.bonds[bond], v.sites[site]
	var label string
	var all []float64
	switch {
	case bonds != nil && sites != nil:
		label = "bonds: " + bond + " coupling, sites: " + site + " field"
		all = append(mapValues(bonds), mapValues(sites)...)
	case bonds != nil:
		label, all = "bonds: "+bond+" coupling", mapValues(bonds)
	case sites != nil:
		label, all = "sites: "+site+" field", mapValues(sites)
	default:
		return ls, nil, nil
	}
	m, err := plot.AutoColorMap(label, all)
	if err != nil {
		return ls, nil, err
	}
	if bonds != nil {
		ls.BondValues, ls.BondMap = bonds, m
	}
	if sites != nil {
		ls.SiteValues, ls.SiteMap = sites, m
	}
	return ls, []plot.ColorMap{m}, nil
}

// pullLayers colours bonds and sites by their signed pulls on one
// diverging scale, zero at its neutral centre.
func (v *latticeValues) pullLayers() (plot.LatticeLayers, error) {
	all := append(mapValues(v.bondPull), mapValues(v.sitePull)...)
	cm, err := plot.NewColorMap(plot.Diverging, "pull (fitted − true)/stderr", all)
	if err != nil {
		return plot.LatticeLayers{}, err
	}
	return plot.LatticeLayers{BondValues: v.bondPull, BondMap: cm, SiteValues: v.sitePull, SiteMap: cm}, nil
}

// mapValues returns a map's values; their order does not matter to a
// colour map's range.
func mapValues[K comparable](m map[K]float64) []float64 {
	out := make([]float64, 0, len(m))
	for _, v := range m {
		out = append(out, v)
	}
	return out
}
