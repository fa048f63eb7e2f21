package fit

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"warmfit/lattice"
)

// gridBonds lists the nearest-neighbour bonds of an open lx×ly grid,
// site x + lx*y (ly = 1 is a chain).
func gridBonds(lx, ly int) [][2]int {
	var out [][2]int
	for y := 0; y < ly; y++ {
		for x := 0; x < lx; x++ {
			s := x + lx*y
			if x+1 < lx {
				out = append(out, [2]int{s, s + 1})
			}
			if y+1 < ly {
				out = append(out, [2]int{s, s + lx})
			}
		}
	}
	return out
}

// triangularBonds adds one diagonal per plaquette of the grid: a
// triangular lattice, 3-colourable and not bipartite.
func triangularBonds(lx, ly int) [][2]int {
	out := gridBonds(lx, ly)
	for y := 0; y+1 < ly; y++ {
		for x := 0; x+1 < lx; x++ {
			out = append(out, [2]int{x + lx*y, x + 1 + lx*(y+1)})
		}
	}
	return out
}

// kingBonds adds both diagonals of every plaquette: the square lattice
// with next-nearest-neighbour bonds.
func kingBonds(lx, ly int) [][2]int {
	out := gridBonds(lx, ly)
	for y := 0; y+1 < ly; y++ {
		for x := 0; x+1 < lx; x++ {
			out = append(out, [2]int{x + lx*y, x + 1 + lx*(y+1)}, [2]int{x + 1 + lx*y, x + lx*(y+1)})
		}
	}
	return out
}

func modelTerms(t testing.TB, n int, bonds [][2]int, fields, pairs []string) []lattice.Term {
	var terms []lattice.Term
	for s := 0; s < n; s++ {
		for _, f := range fields {
			terms = append(terms, mustTerm(t, f, s))
		}
	}
	for _, b := range bonds {
		for _, p := range pairs {
			terms = append(terms, mustTerm(t, p, b[0], b[1]))
		}
	}
	return terms
}

var all2local = []string{"XX", "XY", "XZ", "YX", "YY", "YZ", "ZX", "ZY", "ZZ"}

func checkCovers(t *testing.T, bases []string, terms []lattice.Term) {
	t.Helper()
	for _, term := range terms {
		served := false
		for _, b := range bases {
			served = served || Serves(b, term)
		}
		if !served {
			t.Fatalf("term %s served by no basis of %v", term.Key(), bases)
		}
	}
}

func TestCoveringBases(t *testing.T) {
	for _, tc := range []struct {
		name   string
		n      int
		terms  []lattice.Term
		want   int // exact count expected, 0 to check bounds only
		bound  int // CoveringLowerBound
		atMost int
	}{
		// XXZ with fields: each term uses one letter, so the uniform bases
		// X..X, Y..Y, Z..Z serve all; XX, YY, ZZ on one bond need 3
		// distinct bases (one letter pair per basis per bond).
		{"XXZ+fields chain", 12, modelTerms(t, 12, gridBonds(12, 1), []string{"X", "Z"}, []string{"XX", "YY", "ZZ"}), 3, 3, 3},
		{"XXZ+fields square", 16, modelTerms(t, 16, gridBonds(4, 4), []string{"Z"}, []string{"XX", "YY", "ZZ"}), 3, 3, 3},
		// All nine two-site terms on a bond: each ordered letter pair on
		// that bond needs its own basis, so at least 9; a bipartite graph
		// is 2-coloured and the 9 colour->letter maps reach it.
		{"all2local chain", 10, modelTerms(t, 10, gridBonds(10, 1), []string{"X", "Y", "Z"}, all2local), 9, 9, 9},
		{"all2local square", 12, modelTerms(t, 12, gridBonds(4, 3), []string{"X", "Y", "Z"}, all2local), 9, 9, 9},
		// Triangular lattice: 3 colours; 9 is still the lower bound (an
		// orthogonal array OA(9,4,3,2) exists, so 9 is achievable for up
		// to 4 colours); the greedy set cover over the 27 maps finds 9.
		{"all2local triangular", 12, modelTerms(t, 12, triangularBonds(4, 3), nil, all2local), 9, 9, 9},
		// J1-J2 square lattice (next-nearest bonds too: the king's graph,
		// 4 colours): the orthogonal array OA(9,4,3,2) still gives 9.
		{"all2local king", 25, modelTerms(t, 25, kingBonds(5, 5), []string{"X", "Y", "Z"}, all2local), 9, 9, 9},
		// Ising with transverse field: ZZ and X are single-letter: 2 bases.
		{"TFIM", 8, modelTerms(t, 8, gridBonds(8, 1), []string{"X"}, []string{"ZZ"}), 2, 2, 2},
		// One mixed pair: XZ on every bond of a chain needs alternating
		// letters; one basis XZXZ.. serves XZ on even bonds, ZXZX.. on odd,
		// and site 1 is asked for Z (bond 0-1) and X (bond 1-2): at least 2.
		{"XZ chain", 6, modelTerms(t, 6, gridBonds(6, 1), nil, []string{"XZ"}), 2, 2, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			bases, err := CoveringBases(tc.n, tc.terms)
			if err != nil {
				t.Fatal(err)
			}
			checkCovers(t, bases, tc.terms)
			if lb := CoveringLowerBound(tc.terms); lb != tc.bound {
				t.Errorf("lower bound %d, want %d", lb, tc.bound)
			}
			if len(bases) < tc.bound || len(bases) > tc.atMost || (tc.want > 0 && len(bases) != tc.want) {
				t.Errorf("%d bases %v; want %d (bound %d, at most %d)", len(bases), bases, tc.want, tc.bound, tc.atMost)
			}
			again, _ := CoveringBases(tc.n, tc.terms)
			if !reflect.DeepEqual(again, bases) {
				t.Error("not deterministic")
			}
			t.Logf("%d bases: %s", len(bases), strings.Join(bases, " "))
		})
	}
}

func TestCoveringBasesManyColours(t *testing.T) {
	// A clique of 8 sites (every pair interacts) needs 8 colours: past the
	// enumeration limit, maps are built greedily row by row.
	const n = 8
	var bonds [][2]int
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			bonds = append(bonds, [2]int{i, j})
		}
	}
	terms := modelTerms(t, n, bonds, []string{"Y"}, []string{"ZZ", "XZ", "XY"})
	bases, err := CoveringBases(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	checkCovers(t, bases, terms)
	lb := CoveringLowerBound(terms)
	if len(bases) < lb {
		t.Fatalf("%d bases below the lower bound %d", len(bases), lb)
	}
	t.Logf("clique of 8: %d bases (lower bound %d)", len(bases), lb)
}

func TestCoveringBasesErrors(t *testing.T) {
	if _, err := CoveringBases(0, nil); err == nil {
		t.Error("n = 0 accepted")
	}
	if _, err := CoveringBases(2, []lattice.Term{mustTerm(t, "ZZ", 1, 2)}); err == nil {
		t.Error("site outside accepted")
	}
	if b, err := CoveringBases(3, nil); err != nil || len(b) != 0 {
		t.Errorf("no terms: %v, %v", b, err)
	}
}

func TestRandomBases(t *testing.T) {
	a := RandomBases(50, 200, 11)
	b := RandomBases(50, 200, 11)
	if !reflect.DeepEqual(a, b) {
		t.Fatal("same seed, different bases")
	}
	if reflect.DeepEqual(a, RandomBases(50, 200, 12)) {
		t.Fatal("different seeds, same bases")
	}
	// Letters uniform: each count is Binomial(10^4, 1/3), sd ≈ 47
	// (common practice: 5 sd).
	counts := map[rune]int{}
	for _, s := range a {
		if len(s) != 50 {
			t.Fatalf("basis length %d", len(s))
		}
		for _, c := range s {
			counts[c]++
		}
	}
	const total, sd = 10000, 47.14
	for _, c := range "XYZ" {
		if math.Abs(float64(counts[c])-total/3.0) > 5*sd {
			t.Errorf("letter %c: %d of %d", c, counts[c], total)
		}
	}
	if len(counts) != 3 {
		t.Errorf("letters %v", counts)
	}
}

func TestShotsPerTerm(t *testing.T) {
	terms := []lattice.Term{mustTerm(t, "Z", 0), mustTerm(t, "XZ", 0, 1), mustTerm(t, "YY", 1, 2), mustTerm(t, "X", 2)}
	bases := []string{"ZZZ", "XZX", "XZZ", "YYY"}
	// By hand: Z0 in ZZZ; XZ01 in XZX, XZZ; YY12 in YYY; X2 in XZX.
	got := ShotsPerTerm(bases, 100, terms)
	if fmt.Sprint(got) != "[100 200 100 100]" {
		t.Errorf("got %v", got)
	}
}

// TestLocalCoveringBases checks the covering:3 scheme: every Pauli
// string on every connected set of up to three sites is served (checked
// by brute force with Serves), and a three-site set asking all 27 letter
// strings needs at least 27 bases (one string per basis on a site set;
// counting argument as in CoveringLowerBound, common practice).
func TestLocalCoveringBases(t *testing.T) {
	for _, spec := range []string{"chain:12", "square:3x4"} {
		l, err := lattice.Open(spec)
		if err != nil {
			t.Fatal(err)
		}
		var terms []lattice.Term
		for _, b := range l.NN {
			terms = append(terms, lattice.Term{Pauli: "ZZ", Sites: []int{b.I, b.J}})
		}
		bases, desc, err := SchemeBases("covering:3", l.NumSites(), terms, 1)
		if err != nil || desc != "covering:3" {
			t.Fatalf("%s: %v %q", spec, err, desc)
		}
		strs, err := LocalStrings(l.NumSites(), terms, 3)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range strs {
			if !slices.ContainsFunc(bases, func(b string) bool { return Serves(b, s) }) {
				t.Fatalf("%s: %s not served", spec, s.Key())
			}
		}
		if len(bases) < 27 {
			t.Errorf("%s: %d bases, below the lower bound 27", spec, len(bases))
		}
		t.Logf("%s: %d strings, %d bases", spec, len(strs), len(bases))
	}
}
