package lattice

import (
	"math/rand/v2"
	"testing"
)

// testEdge is an edge of a test graph with the label seen from i and
// the label seen from j.
type testEdge struct {
	i, j   int
	li, lj uint8
}

func makeGraph(colours []uint8, edges []testEdge) *colouredGraph {
	n := len(colours)
	adj := make([][]testEdge, n)
	for _, e := range edges {
		adj[e.i] = append(adj[e.i], e)
		adj[e.j] = append(adj[e.j], testEdge{e.j, e.i, e.lj, e.li})
	}
	g := &colouredGraph{colour: append([]uint8(nil), colours...), start: []int32{0}}
	for v := 0; v < n; v++ {
		for _, e := range adj[v] {
			g.nbr = append(g.nbr, int32(e.j))
			g.label = append(g.label, e.li)
		}
		g.start = append(g.start, int32(len(g.nbr)))
	}
	return g
}

// permuted relabels vertex v as perm[v].
func permuted(colours []uint8, edges []testEdge, perm []int) ([]uint8, []testEdge) {
	c := make([]uint8, len(colours))
	for v, p := range perm {
		c[p] = colours[v]
	}
	e := make([]testEdge, len(edges))
	for k, x := range edges {
		e[k] = testEdge{perm[x.i], perm[x.j], x.li, x.lj}
	}
	return c, e
}

func formOf(colours []uint8, edges []testEdge) (string, int64) {
	var c canonizer
	form, _, autos := c.canonicalForm(makeGraph(colours, edges))
	return string(form), autos
}

// bruteForm is the smallest encoding over all n! numberings, found
// without refinement: an independent canonical form for small graphs
// (common practice), and the number of numberings that reach it, the
// automorphism group order.
func bruteForm(colours []uint8, edges []testEdge) (string, int64) {
	n := len(colours)
	g := makeGraph(colours, edges)
	perm := make([]int32, n)
	for i := range perm {
		perm[i] = int32(i)
	}
	var c canonizer
	c.g, c.n = g, n
	c.order = make([]int32, n)
	c.bestOrder = make([]int32, n)
	var visit func(k int)
	visit = func(k int) {
		if k == n {
			c.leaf(perm)
			return
		}
		for i := k; i < n; i++ {
			perm[k], perm[i] = perm[i], perm[k]
			visit(k + 1)
			perm[k], perm[i] = perm[i], perm[k]
		}
	}
	visit(0)
	return string(c.best), c.autos
}

func randomGraph(rng *rand.Rand, n int, p float64, colours, labels int) ([]uint8, []testEdge) {
	c := make([]uint8, n)
	for v := range c {
		c[v] = uint8(rng.IntN(colours))
	}
	var e []testEdge
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if rng.Float64() < p {
				l := uint8(rng.IntN(labels))
				e = append(e, testEdge{i, j, l, l})
			}
		}
	}
	return c, e
}

// Canonical forms decide isomorphism exactly: on random small graphs the
// form is the same under every relabelling, and two graphs have the same
// form exactly when their brute-force forms agree; automorphism counts
// agree with the brute-force count.
func TestCanonicalFormAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 300; trial++ {
		n := 1 + rng.IntN(7)
		colours, labels := 1+rng.IntN(2), 1+rng.IntN(2)
		ca, ea := randomGraph(rng, n, 0.2+0.6*rng.Float64(), colours, labels)
		cb, eb := randomGraph(rng, n, 0.2+0.6*rng.Float64(), colours, labels)
		fa, aa := formOf(ca, ea)
		fb, _ := formOf(cb, eb)
		ba, bautos := bruteForm(ca, ea)
		bb, _ := bruteForm(cb, eb)
		if (fa == fb) != (ba == bb) {
			t.Fatalf("trial %d: forms equal %v, brute-force forms equal %v", trial, fa == fb, ba == bb)
		}
		if aa != bautos {
			t.Fatalf("trial %d: %d automorphisms, brute force %d", trial, aa, bautos)
		}
		perm := rng.Perm(n)
		cp, ep := permuted(ca, ea, perm)
		if fp, _ := formOf(cp, ep); fp != fa {
			t.Fatalf("trial %d: relabelled graph has a different form", trial)
		}
	}
}

// Graphs that colour refinement alone cannot tell apart (both regular of
// the same degree) and known automorphism group orders.
func TestCanonicalFormRegularGraphs(t *testing.T) {
	cycle := func(n, offset int) []testEdge {
		var e []testEdge
		for i := 0; i < n; i++ {
			e = append(e, testEdge{offset + i, offset + (i+1)%n, 0, 0})
		}
		return e
	}
	six := make([]uint8, 6)
	c6, _ := formOf(six, cycle(6, 0))
	twoTriangles, autos := formOf(six, append(cycle(3, 0), cycle(3, 3)...))
	if c6 == twoTriangles {
		t.Errorf("the 6-cycle and two triangles have the same form")
	}
	if autos != 72 { // (3!·... ) = 2 · 6 · 6, derived
		t.Errorf("two triangles: %d automorphisms, want 72", autos)
	}
	if _, a := formOf(six, cycle(6, 0)); a != 12 {
		t.Errorf("6-cycle: %d automorphisms, want 12 (dihedral group)", a)
	}
	// Petersen graph: outer 5-cycle, inner pentagram, spokes;
	// automorphism group S5 of order 120 (common knowledge in graph theory).
	var pe []testEdge
	for i := 0; i < 5; i++ {
		pe = append(pe, testEdge{i, (i + 1) % 5, 0, 0}, testEdge{5 + i, 5 + (i+2)%5, 0, 0}, testEdge{i, 5 + i, 0, 0})
	}
	if _, a := formOf(make([]uint8, 10), pe); a != 120 {
		t.Errorf("Petersen graph: %d automorphisms, want 120", a)
	}
	// Complete graph K5: 5! automorphisms.
	var k5 []testEdge
	for i := 0; i < 5; i++ {
		for j := i + 1; j < 5; j++ {
			k5 = append(k5, testEdge{i, j, 0, 0})
		}
	}
	if _, a := formOf(make([]uint8, 5), k5); a != 120 {
		t.Errorf("K5: %d automorphisms, want 120", a)
	}
}

// A directed edge's ends see different labels: a directed 3-path has no
// non-trivial automorphism, the undirected one has its reflection, and a
// directed 3-cycle keeps its 3 rotations.
func TestCanonicalFormDirected(t *testing.T) {
	three := make([]uint8, 3)
	if _, a := formOf(three, []testEdge{{0, 1, 1, 2}, {1, 2, 1, 2}}); a != 1 {
		t.Errorf("directed path: %d automorphisms, want 1", a)
	}
	if _, a := formOf(three, []testEdge{{0, 1, 0, 0}, {1, 2, 0, 0}}); a != 2 {
		t.Errorf("undirected path: %d automorphisms, want 2", a)
	}
	if _, a := formOf(three, []testEdge{{0, 1, 1, 2}, {1, 2, 1, 2}, {2, 0, 1, 2}}); a != 3 {
		t.Errorf("directed triangle: %d automorphisms, want 3", a)
	}
	fa, _ := formOf(three, []testEdge{{0, 1, 1, 2}, {1, 2, 1, 2}})
	fb, _ := formOf(three, []testEdge{{1, 0, 1, 2}, {1, 2, 1, 2}}) // both out of the middle
	if fa == fb {
		t.Errorf("a directed path and an out-star have the same form")
	}
}
