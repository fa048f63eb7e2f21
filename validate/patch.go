package validate

import (
	"fmt"
	"slices"
	"strings"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// Patch is the part of a model that lives on a set of its sites: the
// terms whose support lies inside the set, renumbered onto a lattice of
// the patch's own. A patch is a finite system with open boundaries where
// the set ends; exact diagonalisation and the expansion both see exactly
// these terms.
type Patch struct {
	// Sites lists the parent model's sites in ascending order; patch site
	// i is parent site Sites[i].
	Sites []int
	// Model holds the patch's terms on its own lattice: a custom graph
	// ("graph" kind) whose bonds are the parent's interaction bonds
	// between the patch's sites, so that the patch's connected clusters
	// are exactly the parent's connected clusters inside it.
	Model *model.Model
	// Parent[i] is the index in the parent's Terms of patch term i.
	Parent []int
}

// CutPatch returns the patch of m on the given sites (any order, no
// repeats). The sites must form a connected set of m's interaction graph
// and hold at least one term.
func CutPatch(m *model.Model, sites []int) (*Patch, error) {
	lat := m.Lattice
	own := slices.Clone(sites)
	slices.Sort(own)
	local := make(map[int]int, len(own))
	for i, s := range own {
		if s < 0 || s >= lat.NumSites() {
			return nil, fmt.Errorf("patch %s: site %d out of range [0,%d)", siteList(sites), s, lat.NumSites())
		}
		if _, dup := local[s]; dup {
			return nil, fmt.Errorf("patch %s: site %d listed twice", siteList(sites), s)
		}
		local[s] = i
	}
	if len(own) == 0 {
		return nil, fmt.Errorf("patch: no sites")
	}
	if !lat.Connected(own) {
		return nil, fmt.Errorf("patch %s: the sites are not connected in the model's interaction graph", siteList(sites))
	}
	coords := make([][]float64, len(own))
	for i, s := range own {
		coords[i] = slices.Clone(lat.Coords[s])
	}
	// Every interaction bond becomes a nearest-neighbour bond of the
	// patch graph (one shell): the graph's own second shell would be the
	// pairs at graph distance two, not the parent's NNN.
	var bonds []lattice.Bond
	for _, b := range lat.InteractionBonds() {
		i, okI := local[b.I]
		j, okJ := local[b.J]
		if okI && okJ {
			bonds = append(bonds, lattice.Bond{I: min(i, j), J: max(i, j)})
		}
	}
	plat, err := lattice.FromGraph(coords, bonds, 1)
	if err != nil {
		return nil, fmt.Errorf("patch %s: %v", siteList(sites), err)
	}
	p := &Patch{Sites: own, Model: &model.Model{Lattice: plat, Beta: m.Beta, Units: m.Units}}
	for k, t := range m.Terms {
		ps := make([]int, len(t.Sites))
		inside := true
		for j, s := range t.Sites {
			q, ok := local[s]
			if !ok {
				inside = false
				break
			}
			ps[j] = q
		}
		if !inside {
			continue
		}
		nt, err := lattice.NewTerm(t.Pauli, ps, t.Coeff)
		if err != nil {
			return nil, fmt.Errorf("patch %s: term %s: %v", siteList(sites), t.Key(), err)
		}
		nt.Group = t.Group
		p.Model.Terms = append(p.Model.Terms, nt)
		p.Parent = append(p.Parent, k)
	}
	if len(p.Parent) == 0 {
		return nil, fmt.Errorf("patch %s: no term of the model lies inside it", siteList(sites))
	}
	if err := p.Model.Validate(); err != nil {
		return nil, fmt.Errorf("patch %s: %v", siteList(sites), err)
	}
	return p, nil
}

// PatchesOfShape returns the site sets of every box of shape[a] unit
// cells along each axis a of a built-in lattice: on an open lattice the
// boxes that fit inside, on a periodic one every origin (boxes may wrap;
// an axis the box spans entirely has one origin). Each box holds every
// site of its cells, listed in the lattice's numbering. Custom graphs
// have no cells: list their patches' sites instead.
func PatchesOfShape(lat *lattice.Lattice, shape []int) ([][]int, error) {
	spec := lat.Spec
	if spec.Kind == "graph" {
		return nil, fmt.Errorf("patch shape %s: a custom graph has no unit cells; list the patches' sites instead", shapeString(shape))
	}
	if len(shape) != len(spec.Size) {
		return nil, fmt.Errorf("patch shape %s: a %s lattice needs %d size%s, like its own size %s",
			shapeString(shape), spec.Kind, len(spec.Size), plural(len(spec.Size)), shapeString(spec.Size))
	}
	cells := 1
	for a, w := range shape {
		if w < 1 || w > spec.Size[a] {
			return nil, fmt.Errorf("patch shape %s: size %d along axis %d must be from 1 to the lattice's %d", shapeString(shape), w, a+1, spec.Size[a])
		}
		cells *= spec.Size[a]
	}
	perCell := lat.NumSites() / cells
	origins := make([]int, len(shape)) // number of origins along each axis
	total := 1
	for a, w := range shape {
		switch {
		case w == spec.Size[a]:
			origins[a] = 1
		case spec.Boundary == lattice.Periodic:
			origins[a] = spec.Size[a]
		default:
			origins[a] = spec.Size[a] - w + 1
		}
		total *= origins[a]
	}
	out := make([][]int, 0, total)
	for o := 0; o < total; o++ {
		origin := make([]int, len(shape))
		rest := o
		for a := range shape {
			origin[a], rest = rest%origins[a], rest/origins[a]
		}
		out = append(out, boxSites(spec.Size, shape, origin, perCell))
	}
	return out, nil
}

// boxSites lists the sites of the box of shape cells at origin, in
// ascending order (site = b + perCell*cell, cell x fastest).
func boxSites(size, shape, origin []int, perCell int) []int {
	n := 1
	for _, w := range shape {
		n *= w
	}
	sites := make([]int, 0, n*perCell)
	for c := 0; c < n; c++ {
		cell, stride, rest := 0, 1, c
		for a, w := range shape {
			x := (origin[a] + rest%w) % size[a]
			rest /= w
			cell += x * stride
			stride *= size[a]
		}
		for b := 0; b < perCell; b++ {
			sites = append(sites, b+perCell*cell)
		}
	}
	slices.Sort(sites)
	return sites
}

func shapeString(shape []int) string {
	parts := make([]string, len(shape))
	for i, w := range shape {
		parts[i] = fmt.Sprint(w)
	}
	return strings.Join(parts, "x")
}

// siteList writes a site set the way the crosscheck command reads it.
func siteList(sites []int) string {
	parts := make([]string, len(sites))
	for i, s := range sites {
		parts[i] = fmt.Sprint(s)
	}
	return strings.Join(parts, ",")
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}
