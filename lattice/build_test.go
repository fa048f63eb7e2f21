package lattice

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"
)

func mustBuild(t testing.TB, spec string) *Lattice {
	t.Helper()
	l, err := Open(spec)
	if err != nil {
		t.Fatalf("Open(%q): %v", spec, err)
	}
	return l
}

// Bond counts of open and periodic lattices. The closed forms count, for
// each kind, the translates of every bond that fit in the patch (common
// practice; e.g. an open Lx x Ly square patch has Lx(Ly-1) vertical and
// Ly(Lx-1) horizontal bonds). A periodic lattice has z N / 2 bonds in a
// shell of coordination z.
func TestBondCounts(t *testing.T) {
	tests := []struct {
		spec    string
		sites   int
		nn, nnn int
	}{
		{"chain:7", 7, 6, 5},
		{"chain:7:periodic", 7, 7, 7},
		{"ladder:5", 10, 5 + 2*4, 2 * 4},
		{"ladder:5:periodic", 10, 3 * 5, 2 * 5},
		// Open square: Lx(Ly-1) + Ly(Lx-1) NN, 2(Lx-1)(Ly-1) diagonals.
		{"square:4x3", 12, 4*2 + 3*3, 2 * 3 * 2},
		{"square:4x3:periodic", 12, 2 * 12, 2 * 12},
		// Open triangular (rhombus): the third bond direction adds
		// (Lx-1)(Ly-1); NNN directions (1,1), (-1,2), (2,-1) fit
		// (Lx-1)(Ly-1), (Lx-1)(Ly-2), (Lx-2)(Ly-1) times.
		{"triangular:5x4", 20, 5*3 + 4*4 + 4*3, 4*3 + 4*2 + 3*3},
		{"triangular:5x4:periodic", 20, 3 * 20, 3 * 20},
		// Open honeycomb of Lx x Ly vertical-bond cells: LxLy vertical,
		// Lx(Ly-1) + (Lx-1)(Ly-1) slanted; NNN 2 x the triangular NN count.
		{"honeycomb:3x4", 24, 12 + 3*3 + 2*3, 2 * (3*3 + 4*2 + 2*3)},
		{"honeycomb:3x4:periodic", 24, 3 * 24 / 2, 6 * 24 / 2},
		// Open kagome: 3 bonds per up triangle, down triangles join
		// (Lx-1)Ly + Lx(Ly-1) + (Lx-1)(Ly-1) more; NNN by the same count
		// over the six NNN offsets.
		{"kagome:3x2", 18, 3*6 + 2*2 + 3*1 + 2*1, 2*2 + 2*1 + 3*1 + 2*1 + 2*2 + 3*1},
		{"kagome:3x2:periodic", 18, 4 * 18 / 2, 4 * 18 / 2},
		// Open cubic: (Lx-1)LyLz + Lx(Ly-1)Lz + LxLy(Lz-1); face diagonals
		// 2(La-1)(Lb-1)Lc for each pair of axes.
		{"cubic:2x3x4", 24, 1*3*4 + 2*2*4 + 2*3*3, 2 * (1*2*4 + 1*3*3 + 2*3*2)},
		{"cubic:3x3x3:periodic", 27, 6 * 27 / 2, 12 * 27 / 2},
	}
	for _, tt := range tests {
		l := mustBuild(t, tt.spec)
		if l.NumSites() != tt.sites || len(l.NN) != tt.nn || len(l.NNN) != tt.nnn {
			t.Errorf("%s: %d sites, %d NN, %d NNN; want %d, %d, %d",
				tt.spec, l.NumSites(), len(l.NN), len(l.NNN), tt.sites, tt.nn, tt.nnn)
		}
		for _, b := range append(slices.Clone(l.NN), l.NNN...) {
			if b.I >= b.J || b.J >= l.NumSites() {
				t.Errorf("%s: bond %v not oriented I < J < N", tt.spec, b)
			}
		}
	}
}

// Coordination numbers of the periodic lattices, NN / NNN (standard
// lattice geometry, e.g. Ashcroft & Mermin ch. 4 for cubic 6/12; kagome
// 4/4 and honeycomb 3/6 from the structure of the tiling).
func TestCoordination(t *testing.T) {
	tests := []struct {
		spec    string
		nn, nnn int
	}{
		{"chain:6:periodic", 2, 2},
		{"ladder:4:periodic", 3, 2},
		{"square:5x4:periodic", 4, 4},
		{"triangular:5x4:periodic", 6, 6},
		{"honeycomb:3x4:periodic", 3, 6},
		{"kagome:3x3:periodic", 4, 4},
		{"cubic:3x4x3:periodic", 6, 12},
		// Smallest tori that the nearest-neighbour shell allows.
		{"square:3x3:periodic", 4, 4},
		{"honeycomb:2x2:periodic", 3, 3},
	}
	for _, tt := range tests {
		l := mustBuild(t, tt.spec)
		nn := degrees(l.NumSites(), l.NN)
		nnn := degrees(l.NumSites(), l.NNN)
		for i := range nn {
			if nn[i] != tt.nn || nnn[i] != tt.nnn {
				t.Errorf("%s: site %d has %d NN and %d NNN, want %d and %d", tt.spec, i, nn[i], nnn[i], tt.nn, tt.nnn)
				break
			}
		}
		// The interaction graph follows Shells.
		if tt.spec == "honeycomb:2x2:periodic" {
			continue // refused with two shells, see TestPeriodicRefusal
		}
		two := mustBuild(t, tt.spec+":shells=2")
		for i := 0; i < l.NumSites(); i++ {
			if len(l.Neighbors(i)) != tt.nn || len(two.Neighbors(i)) != tt.nn+tt.nnn {
				t.Errorf("%s: site %d interaction degrees %d and %d (shells 1, 2)", tt.spec, i, len(l.Neighbors(i)), len(two.Neighbors(i)))
				break
			}
		}
	}
}

func degrees(n int, bonds []Bond) []int {
	d := make([]int, n)
	for _, b := range bonds {
		d[b.I]++
		d[b.J]++
	}
	return d
}

// The unit-cell tables against an independent distance search: on an open
// patch, the pairs at the shortest distance are the NN bonds and those at
// the second-shortest the NNN bonds (definition of the shells).
func TestShellsMatchDistances(t *testing.T) {
	for _, spec := range []string{"chain:6", "ladder:5", "square:5x4", "triangular:5x5", "honeycomb:4x4", "kagome:4x3", "cubic:4x3x3"} {
		l := mustBuild(t, spec)
		n := l.NumSites()
		type pair struct {
			b Bond
			d float64
		}
		var pairs []pair
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				s := 0.0
				for k := range l.Coords[i] {
					s += (l.Coords[i][k] - l.Coords[j][k]) * (l.Coords[i][k] - l.Coords[j][k])
				}
				pairs = append(pairs, pair{Bond{i, j}, math.Sqrt(s)})
			}
		}
		var dists []float64
		for _, p := range pairs {
			dists = append(dists, p.d)
		}
		slices.Sort(dists)
		shells := []float64{dists[0]}
		for _, d := range dists {
			if d > shells[len(shells)-1]+1e-9 {
				shells = append(shells, d)
				if len(shells) == 2 {
					break
				}
			}
		}
		for s, want := range [][]Bond{l.NN, l.NNN} {
			var got []Bond
			for _, p := range pairs {
				if math.Abs(p.d-shells[s]) < 1e-9 {
					got = append(got, p.b)
				}
			}
			w := slices.Clone(want)
			slices.SortFunc(w, compareBonds)
			if !slices.Equal(got, w) {
				t.Errorf("%s shell %d (distance %.4f): distance search finds %d pairs, table gives %d", spec, s+1, shells[s], len(got), len(w))
			}
		}
	}
}

// Site numbering of formats.md: x fastest, then y, then z; site = b +
// nb*cell. Coordinates from the Bravais vectors (triangular a2 = (1/2,
// sqrt3/2); honeycomb a1 = (sqrt3, 0), a2 = (sqrt3/2, 3/2) with bond
// length 1; kagome a1 = (2, 0), a2 = (1, sqrt3)).
func TestNumbering(t *testing.T) {
	s3 := math.Sqrt(3)
	tests := []struct {
		spec string
		site int
		want []float64
	}{
		{"chain:5", 3, []float64{3, 0}},
		{"ladder:8", 5, []float64{2, 1}}, // rung 2, upper leg
		{"square:4x3", 5, []float64{1, 1}},
		{"square:4x3", 11, []float64{3, 2}},
		{"triangular:4x3", 4, []float64{0.5, s3 / 2}},
		{"triangular:4x3", 9, []float64{1 + 1, s3}},  // cell (1,2)
		{"honeycomb:3x3", 7, []float64{s3 / 2, 2.5}}, // b=1 of cell (0,1)
		{"kagome:2x3", 10, []float64{4, s3}},         // b=1 of cell (1,1)
		{"kagome:2x3", 5, []float64{2.5, s3 / 2}},    // b=2 of cell (1,0)
		{"cubic:3x3x3", 13, []float64{1, 1, 1}},
		{"cubic:2x3x4", 7, []float64{1, 0, 1}},
	}
	for _, tt := range tests {
		l := mustBuild(t, tt.spec)
		got := l.Coords[tt.site]
		if len(got) != len(tt.want) {
			t.Errorf("%s site %d: %v, want %v", tt.spec, tt.site, got, tt.want)
			continue
		}
		for k := range got {
			if math.Abs(got[k]-tt.want[k]) > 1e-12 {
				t.Errorf("%s site %d: %v, want %v", tt.spec, tt.site, got, tt.want)
				break
			}
		}
	}
	// Neighbours by index: in square:4x3 site 5 = (1,1) touches (0,1),
	// (2,1), (1,0), (1,2).
	if got := mustBuild(t, "square:4x3").Neighbors(5); !slices.Equal(got, []int{1, 4, 6, 9}) {
		t.Errorf("square:4x3 neighbours of 5: %v, want [1 4 6 9]", got)
	}
}

func TestPeriodicRefusal(t *testing.T) {
	tests := []struct {
		spec string
		want []string // substrings of the error; nil: accepted
	}{
		{"chain:1:periodic", []string{"chain:1:periodic", "size 1", "to itself", "at least 3 along x"}},
		{"chain:2:periodic", []string{"size 2", "doubled", "at least 3 along x"}},
		{"chain:3:periodic", nil},
		{"chain:4:periodic:shells=2", []string{"size 4", "next-nearest", "at least 5 along x"}},
		{"chain:5:periodic:shells=2", nil},
		{"ladder:2:periodic", []string{"size 2", "doubled"}},
		{"square:2x4:periodic", []string{"size 2x4", "at least 3 along x"}},
		{"square:4x2:periodic", []string{"size 4x2", "at least 3 along y"}},
		{"square:3x3:periodic:shells=2", nil},
		{"triangular:3x3:periodic", nil},
		{"triangular:3x3:periodic:shells=2", []string{"size 3x3", "at least 4 along x, 4 along y"}},
		{"triangular:4x4:periodic:shells=2", nil},
		{"honeycomb:2x2:periodic", nil},
		{"honeycomb:1x3:periodic", []string{"size 1x3", "at least 2 along x"}},
		{"honeycomb:2x2:periodic:shells=2", []string{"size 2x2", "at least 3 along x, 3 along y"}},
		{"kagome:1x2:periodic", []string{"size 1x2"}},
		{"kagome:2x2:periodic", nil},
		{"cubic:3x3x2:periodic", []string{"size 3x3x2", "at least 3 along z"}},
	}
	for _, tt := range tests {
		l, err := Open(tt.spec)
		if tt.want == nil {
			if err != nil {
				t.Errorf("%s: %v", tt.spec, err)
			} else if p := wrapProblem(l.NN, l.NNN, l.Spec.Shells); p != "" {
				t.Errorf("%s: built with %s", tt.spec, p)
			}
			continue
		}
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: error %v, want a *SpecError", tt.spec, err)
			continue
		}
		for _, w := range tt.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error %q does not mention %q", tt.spec, err, w)
			}
		}
	}
}

// With one shell the NNN list of a small torus is informational: merged,
// without self pairs or NN pairs. chain:4:periodic has next-nearest pairs
// {0,2} and {1,3} only.
func TestSmallTorusNNNMerged(t *testing.T) {
	l := mustBuild(t, "chain:4:periodic")
	if !slices.Equal(l.NNN, []Bond{{0, 2}, {1, 3}}) {
		t.Errorf("chain:4:periodic NNN %v, want [{0 2} {1 3}]", l.NNN)
	}
}

func TestBuildSpecErrors(t *testing.T) {
	tests := []struct {
		spec Spec
		want string
	}{
		{Spec{Kind: "square", Size: []int{4}}, "square needs 2 sizes"},
		{Spec{Kind: "square", Size: []int{4, -1}}, "size -1 must be positive"},
		{Spec{Kind: "hexagonal", Size: []int{4, 4}}, "unknown lattice kind"},
		{Spec{Kind: "chain", Size: []int{4}, Shells: 3}, "shells 3"},
		{Spec{Kind: "graph", Size: []int{4}}, "custom graphs"},
		{Spec{Kind: "cubic", Size: []int{1000, 1000, 1000}}, "more than"},
	}
	for _, tt := range tests {
		_, err := Build(tt.spec)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("Build(%v): error %v, want one containing %q", tt.spec, err, tt.want)
		}
	}
}

func TestGraphQueries(t *testing.T) {
	l := mustBuild(t, "square:4x3")
	if l.Dim() != 2 || mustBuild(t, "cubic:2x2x2").Dim() != 3 {
		t.Errorf("Dim: %d and %d, want 2 and 3", l.Dim(), mustBuild(t, "cubic:2x2x2").Dim())
	}
	connected := []struct {
		sites []int
		want  bool
	}{
		{[]int{0}, true},
		{[]int{0, 1, 5, 9}, true},
		{[]int{9, 5, 1, 0}, true},
		{[]int{0, 5}, false}, // diagonal: NNN only
		{[]int{}, false},
		{[]int{0, 0}, false},
		{[]int{0, 12}, false},
	}
	for _, tt := range connected {
		if got := l.Connected(tt.sites); got != tt.want {
			t.Errorf("square:4x3 Connected(%v) = %v, want %v", tt.sites, got, tt.want)
		}
	}
	if !mustBuild(t, "square:4x3:shells=2").Connected([]int{0, 5}) {
		t.Error("square:4x3:shells=2: diagonal pair not connected")
	}
	// Perimeter by hand: site 5 = (1,1) has 4 neighbours; {0} has 2;
	// {0,1} has {2,4,5}.
	for _, tt := range []struct {
		sites []int
		want  int
	}{{[]int{5}, 4}, {[]int{0}, 2}, {[]int{0, 1}, 3}, {[]int{0, 1, 2, 3}, 4}} {
		if got := l.Perimeter(tt.sites); got != tt.want {
			t.Errorf("square:4x3 Perimeter(%v) = %d, want %d", tt.sites, got, tt.want)
		}
	}
	if c := l.Components(); len(c) != 1 || len(c[0]) != 12 {
		t.Errorf("square:4x3 components %v, want one of 12 sites", c)
	}
	if got := len(mustBuild(t, "square:4x3:shells=2").InteractionBonds()); got != 17+12 {
		t.Errorf("square:4x3:shells=2 has %d interaction bonds, want 17 + 12", got)
	}
}

func TestWithShells(t *testing.T) {
	l := mustBuild(t, "square:3x3")
	two, err := l.WithShells(2)
	if err != nil || two.Spec.Shells != 2 || len(two.InteractionBonds()) != 12+8 {
		t.Errorf("square:3x3 with two shells: %v, %v", two, err)
	}
	if same, _ := l.WithShells(1); same != l {
		t.Error("WithShells(1) of a one-shell lattice is not the lattice itself")
	}
	if _, err := mustBuild(t, "triangular:3x3:periodic").WithShells(2); !errors.As(err, new(*SpecError)) {
		t.Errorf("triangular:3x3:periodic with two shells: %v, want a *SpecError", err)
	}
	g, err := FromGraph(ring(5), []Bond{{0, 1}, {1, 2}}, 1)
	if err != nil {
		t.Fatal(err)
	}
	if g2, err := g.WithShells(2); err != nil || !slices.Contains(g2.Neighbors(0), 2) || slices.Contains(g.Neighbors(0), 2) {
		t.Errorf("graph with two shells: %v", err)
	}
	if _, err := l.WithShells(3); err == nil {
		t.Error("WithShells(3) accepted")
	}
}
