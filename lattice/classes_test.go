package lattice

import (
	"fmt"
	"slices"
	"testing"
)

func mustClasses(t testing.TB, kind string, order int, opt ClassOptions) *ClassList {
	t.Helper()
	c, err := ClusterClasses(kind, order, opt)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// The class counts summed per size are the fixed lattice animals of the
// infinite lattice, per unit cell.
func TestClassAnimalsOEIS(t *testing.T) {
	tests := []struct {
		kind    string
		perCell []int64
		source  string
	}{
		// OEIS A001168, fixed polyominoes.
		{"square", []int64{1, 2, 6, 19, 63, 216, 760, 2725, 9910, 36446}, "A001168"},
		// OEIS A001207, fixed polyhexes; n = 8, 9 marked "computed" in
		// references.md and confirmed here by the torus enumeration of
		// TestLatticeAnimalsOEIS for n = 8.
		{"triangular", []int64{1, 3, 11, 44, 186, 814, 3652, 16689, 77359}, "A001207"},
		// OEIS A001420, fixed polyiamonds, per 2-site cell.
		{"honeycomb", []int64{2, 3, 6, 14, 36, 94, 250, 675, 1838, 5053}, "A001420"},
		// OEIS A001931, fixed polycubes.
		{"cubic", []int64{1, 3, 15, 86, 534, 3481, 23502}, "A001931"},
		// One cluster of each size per site (references.md).
		{"chain", []int64{1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1}, "references.md"},
	}
	for _, tt := range tests {
		if testing.Short() && len(tt.perCell) > 8 && tt.kind != "chain" {
			tt.perCell = tt.perCell[:8]
		}
		c := mustClasses(t, tt.kind, len(tt.perCell), ClassOptions{})
		if got := c.AnimalsPerCell(); !slices.Equal(got, tt.perCell) {
			t.Errorf("%s (%s): animals per cell %v, want %v", tt.kind, tt.source, got, tt.perCell)
		}
	}
}

// With one bond kind and one site kind the classes are the topologically
// distinct clusters (isomorphism classes of induced subgraphs). The
// sequences are the "computed" ones of references.md, confirmed here.
func TestClassesTopologicallyDistinct(t *testing.T) {
	tests := []struct {
		kind string
		want []int
	}{
		{"square", []int{1, 1, 1, 3, 4, 10, 19, 51, 112, 300}},
		{"triangular", []int{1, 1, 2, 4, 8, 22, 54, 156}},
		{"chain", []int{1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1}},
	}
	for _, tt := range tests {
		want := tt.want
		if testing.Short() && len(want) > 8 && tt.kind != "chain" {
			want = want[:8]
		}
		c := mustClasses(t, tt.kind, len(want), ClassOptions{})
		if got := c.ClassesBySize(); !slices.Equal(got, want) {
			t.Errorf("%s: classes by size %v, want %v", tt.kind, got, want)
		}
	}
}

// torusClasses classifies every cluster of a periodic lattice through the
// lattice's own enumeration, graph and perimeter (not the class region),
// and returns the number of unit cells and the cluster counts by form
// and perimeter.
func torusClasses(t *testing.T, spec string, order int) (int64, map[string]map[int]int64) {
	t.Helper()
	lat := mustBuild(t, spec)
	nb := len(unitCells[lat.Spec.Kind].Basis)
	cells := int64(lat.NumSites() / nb)
	out := map[string]map[int]int64{}
	var canon canonizer
	var g colouredGraph
	lat.EachCluster(order, func(sites []int) bool {
		g.colour = g.colour[:0]
		g.start = append(g.start[:0], 0)
		g.nbr, g.label = g.nbr[:0], g.label[:0]
		for _, s := range sites {
			g.colour = append(g.colour, 0)
			for _, u := range lat.Neighbors(s) {
				if k, in := slices.BinarySearch(sites, u); in {
					g.nbr = append(g.nbr, int32(k))
					g.label = append(g.label, 0)
				}
			}
			g.start = append(g.start, int32(len(g.nbr)))
		}
		form, _, _ := canon.canonicalForm(&g)
		m := out[string(form)]
		if m == nil {
			m = map[int]int64{}
			out[string(form)] = m
		}
		m[lat.Perimeter(sites)]++
		return true
	})
	return cells, out
}

// The classes, with their counts per perimeter, agree with the
// site-resolved enumeration of a periodic lattice large enough that no
// cluster or perimeter wraps (common practice: the same lattice constants
// counted two independent ways).
func TestClassesAgainstTorus(t *testing.T) {
	tests := []struct {
		kind, spec string
		order      int
	}{
		{"square", "square:14x14:periodic", 6},
		{"triangular", "triangular:12x12:periodic", 5},
		{"honeycomb", "honeycomb:12x12:periodic", 7},
		{"kagome", "kagome:10x10:periodic", 6},
		{"chain", "chain:30:periodic", 12},
		{"ladder", "ladder:20:periodic", 7},
		{"cubic", "cubic:9x9x9:periodic", 4},
	}
	for _, tt := range tests {
		cells, want := torusClasses(t, tt.spec, tt.order)
		c := mustClasses(t, tt.kind, tt.order, ClassOptions{})
		if len(c.Classes) != len(want) {
			t.Errorf("%s: %d classes, torus %s has %d", tt.kind, len(c.Classes), tt.spec, len(want))
		}
		for _, cl := range c.Classes {
			w := want[cl.Form]
			for _, pc := range cl.Perimeters {
				if got := pc.Count * cells; got != w[pc.Perimeter] {
					t.Errorf("%s class of %d sites, perimeter %d: %d per cell, torus %d on %d cells",
						tt.kind, cl.Size, pc.Perimeter, pc.Count, w[pc.Perimeter], cells)
				}
				delete(w, pc.Perimeter)
			}
			for p, v := range w {
				t.Errorf("%s class of %d sites: torus has %d with perimeter %d, classes none", tt.kind, cl.Size, v, p)
			}
		}
	}
}

// Kinds split classes: the ladder's rungs and legs, the honeycomb's two
// sublattices, directed chain bonds.
func TestClassKinds(t *testing.T) {
	plain := mustClasses(t, "ladder", 4, ClassOptions{})
	legs := mustClasses(t, "ladder", 4, ClassOptions{BondKind: []int{0, 1, 1}})
	// Two sites: rung or leg. Three sites: a path of rung+leg (4 per
	// cell) or two legs (2 per cell).
	if got := legs.ClassesBySize(); got[1] != 2 || got[2] != 2 {
		t.Errorf("ladder with rung and leg kinds: classes by size %v, want 2 of 2 and 3 sites", got)
	}
	if got := plain.ClassesBySize(); got[1] != 1 || got[2] != 1 {
		t.Errorf("ladder with one kind: classes by size %v, want 1 of 2 and 3 sites", got)
	}
	if !slices.Equal(plain.AnimalsPerCell(), legs.AnimalsPerCell()) {
		t.Errorf("kinds changed the animal counts: %v and %v", plain.AnimalsPerCell(), legs.AnimalsPerCell())
	}

	sub := mustClasses(t, "honeycomb", 3, ClassOptions{SiteKind: []int{0, 1}})
	// One site of each sublattice; one bond; paths A-B-A and B-A-B.
	if got := sub.ClassesBySize(); !slices.Equal(got, []int{2, 1, 2}) {
		t.Errorf("honeycomb with sublattice kinds: classes by size %v, want [2 1 2]", got)
	}

	dir := mustClasses(t, "chain", 6, ClassOptions{Directed: []bool{true}})
	und := mustClasses(t, "chain", 6, ClassOptions{})
	for k := range dir.Classes {
		if a, b := dir.Classes[k].Automorphisms, und.Classes[k].Automorphisms; k > 0 && (a != 1 || b != 2) {
			t.Errorf("chain of %d sites: %d automorphisms directed, %d undirected; want 1 and 2", k+1, a, b)
		}
	}
}

// The ladder's bond types are documented in BondTypes' comment.
func TestBondTypesLadder(t *testing.T) {
	bt, err := BondTypes("ladder", 1)
	if err != nil {
		t.Fatal(err)
	}
	want := []BondType{{1, 0, 1, [3]int{}}, {1, 0, 0, [3]int{1}}, {1, 1, 1, [3]int{1}}}
	if !slices.Equal(bt, want) {
		t.Errorf("ladder bond types %v, want %v", bt, want)
	}
}

func TestClassErrors(t *testing.T) {
	for _, tt := range []struct {
		kind  string
		order int
		opt   ClassOptions
	}{
		{"graph", 3, ClassOptions{}},
		{"pentagonal", 3, ClassOptions{}},
		{"square", 0, ClassOptions{}},
		{"square", 3, ClassOptions{BondKind: []int{0}}},
		{"square", 3, ClassOptions{SiteKind: []int{0, 1}}},
		{"square", 3, ClassOptions{Shells: 3}},
		{"square", 3, ClassOptions{BondKind: []int{0, 99}}},
	} {
		if _, err := ClusterClasses(tt.kind, tt.order, tt.opt); err == nil {
			t.Errorf("ClusterClasses(%q, %d, %+v) accepted", tt.kind, tt.order, tt.opt)
		}
	}
}

func ExampleClusterClasses() {
	c, err := ClusterClasses("square", 4, ClassOptions{})
	if err != nil {
		panic(err)
	}
	for _, cl := range c.Classes {
		fmt.Printf("%d sites, %d bonds: %d per site, %d automorphisms\n", cl.Size, len(cl.Bonds), cl.Count, cl.Automorphisms)
	}
	// Output:
	// 1 sites, 0 bonds: 1 per site, 1 automorphisms
	// 2 sites, 1 bonds: 2 per site, 2 automorphisms
	// 3 sites, 2 bonds: 6 per site, 2 automorphisms
	// 4 sites, 4 bonds: 1 per site, 8 automorphisms
	// 4 sites, 3 bonds: 14 per site, 2 automorphisms
	// 4 sites, 3 bonds: 4 per site, 6 automorphisms
}
