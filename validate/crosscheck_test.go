package validate

import (
	"math"
	"slices"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// disorderedXXZ is a square XXZ model with X and Z fields and 5%
// disorder, the kind of model a user brings.
func disorderedXXZ(t *testing.T, spec string) *model.Model {
	t.Helper()
	lat, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	terms, err := model.Preset(lat, "xxz", map[string]float64{"Jxy": 0.5, "Jz": 0.4, "hz": 0.3, "hx": 0.2})
	if err != nil {
		t.Fatal(err)
	}
	model.AddDisorder(terms, 0.05, 4)
	return &model.Model{Lattice: lat, Terms: terms, Beta: 0.5}
}

func TestPatchesOfShape(t *testing.T) {
	for _, c := range []struct {
		spec  string
		shape []int
		want  int
		first []int
	}{
		{"square:4x4", []int{3, 3}, 4, []int{0, 1, 2, 4, 5, 6, 8, 9, 10}},
		{"square:4x4:periodic", []int{3, 2}, 16, []int{0, 1, 2, 4, 5, 6}},
		{"square:4x4:periodic", []int{4, 1}, 4, []int{0, 1, 2, 3}},
		{"ladder:6", []int{2}, 5, []int{0, 1, 2, 3}},
		{"chain:8:periodic", []int{3}, 8, []int{0, 1, 2}},
	} {
		lat, err := lattice.Open(c.spec)
		if err != nil {
			t.Fatal(err)
		}
		sets, err := PatchesOfShape(lat, c.shape)
		if err != nil {
			t.Fatalf("%s %v: %v", c.spec, c.shape, err)
		}
		if len(sets) != c.want || !slices.Equal(sets[0], c.first) {
			t.Errorf("%s %v: %d patches, first %v; want %d, first %v", c.spec, c.shape, len(sets), sets[0], c.want, c.first)
		}
		for _, s := range sets {
			if !lat.Connected(s) {
				t.Errorf("%s %v: patch %v not connected", c.spec, c.shape, s)
			}
		}
	}
	// A box wrapping the periodic boundary: cells x = 3, 0 of rows 0, 1.
	lat, _ := lattice.Open("square:4x4:periodic")
	sets, _ := PatchesOfShape(lat, []int{2, 2})
	if got := sets[3]; !slices.Equal(got, []int{0, 3, 4, 7}) {
		t.Errorf("wrapping box: %v, want [0 3 4 7]", got)
	}
	if _, err := PatchesOfShape(lat, []int{5, 1}); err == nil {
		t.Error("a box larger than the lattice was accepted")
	}
}

// The crosscheck on patches cut from a model equals an independent
// computation: the same patch built as an open square:3x3 lattice with
// the terms renumbered by hand, diagonalised densely (ExactThermal) and
// expanded on its own (cluster.Expansion), to 1e-12. At the patch size
// the expansion is exact by construction (common practice: a linked-
// cluster expansion of a finite cluster terminates at its size).
func TestCrosscheckEqualsSeparateRuns(t *testing.T) {
	m := disorderedXXZ(t, "square:4x3")
	m.Beta = 0.25
	sets, err := PatchesOfShape(m.Lattice, []int{3, 2})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Crosscheck(m, m.Beta, sets, CrosscheckOptions{Tol: 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Orders) != 6 {
		t.Fatalf("%d orders, want 6", len(res.Orders))
	}
	own, _ := lattice.Open("square:3x2")
	wantMax := make([]float64, 6)
	for pi, sites := range sets {
		local := map[int]int{}
		for i, s := range sites {
			local[s] = i
		}
		var terms []lattice.Term
		for _, tm := range m.Terms {
			ps := make([]int, 0, len(tm.Sites))
			for _, s := range tm.Sites {
				if q, ok := local[s]; ok {
					ps = append(ps, q)
				}
			}
			if len(ps) == len(tm.Sites) {
				nt, err := lattice.NewTerm(tm.Pauli, ps, tm.Coeff)
				if err != nil {
					t.Fatal(err)
				}
				terms = append(terms, nt)
			}
		}
		if len(terms) != len(res.Patches[pi].Exact) {
			t.Fatalf("patch %d: %d terms, crosscheck has %d", pi, len(terms), len(res.Patches[pi].Exact))
		}
		th, err := ExactThermal(6, terms, m.Beta)
		if err != nil {
			t.Fatal(err)
		}
		ops, _ := cluster.TermPaulis(terms)
		exact := make([]float64, len(ops))
		th.ExpectAll(ops, exact)
		e, err := cluster.NewExpansion(own, terms)
		if err != nil {
			t.Fatal(err)
		}
		coeffs := make([]float64, len(terms))
		for k, tm := range terms {
			coeffs[k] = tm.Coeff
		}
		r, err := e.Evaluate(coeffs, m.Beta, cluster.Options{Order: 6})
		if err != nil {
			t.Fatal(err)
		}
		for o := 1; o <= 6; o++ {
			for k := range terms {
				d := math.Abs(r.Expect[o-1][k] - exact[k])
				wantMax[o-1] = math.Max(wantMax[o-1], d)
				if got := math.Abs(res.Patches[pi].Diff(o, k)); math.Abs(got-d) > 1e-12 {
					t.Errorf("patch %d order %d term %s: |diff| %g, separate run %g", pi, o, terms[k].Key(), got, d)
				}
			}
		}
	}
	for o, w := range wantMax {
		if got := res.Orders[o].MaxDiff; math.Abs(got-w) > 1e-12 {
			t.Errorf("order %d: max diff %g, separate runs %g", o+1, got, w)
		}
	}
	if last := res.Orders[5]; !last.Exact || last.MaxDiff > 1e-10 {
		t.Errorf("order 6 on 3x2 patches: exact %v, max diff %g; the expansion of a whole patch must be exact", last.Exact, last.MaxDiff)
	}
	if !res.Trusted || res.AgreeOrder == 0 || res.AgreeOrder >= 5 {
		t.Errorf("beta 0.25: trusted %v from order %d; verdict %q", res.Trusted, res.AgreeOrder, res.Verdict)
	}
}

// At a temperature far below the expansion's reach the verdict warns;
// the references come from typicality on a 4x4 patch (16 qubits).
func TestCrosscheckWarnsAtLowTemperature(t *testing.T) {
	if testing.Short() {
		t.Skip("typicality on 16 qubits")
	}
	m := disorderedXXZ(t, "square:4x4")
	all := make([]int, 16)
	for i := range all {
		all[i] = i
	}
	res, err := Crosscheck(m, 3, [][]int{all}, CrosscheckOptions{MaxOrder: 6, Typicality: TypicalityOptions{Seed: 2}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Trusted || len(res.Verdict) == 0 || res.Verdict[0][:8] != "WARNING:" {
		t.Errorf("beta 3: trusted %v, verdict %q", res.Trusted, res.Verdict)
	}
	if res.Patches[0].Method != "typicality" || res.Orders[5].Noise == 0 {
		t.Errorf("method %s, noise %g: want typicality with error bars", res.Patches[0].Method, res.Orders[5].Noise)
	}
}

func TestCutPatchRefuses(t *testing.T) {
	m := disorderedXXZ(t, "square:4x4")
	for _, sites := range [][]int{{0, 5}, {0, 0, 1}, {0, 16}, {}} {
		if _, err := CutPatch(m, sites); err == nil {
			t.Errorf("CutPatch(%v) accepted", sites)
		}
	}
}

// The noise excursion is the Bonferroni point of Student t: for one value
// the two-sided 5% point with 15 degrees of freedom is 2.131, for ten
// values the 0.25% point, 3.286 (standard t tables, e.g. Abramowitz &
// Stegun table 26.10); dense references (no vectors) have none. The vector
// count rounds up to two digits.
func TestNoiseExcursionAndRounding(t *testing.T) {
	for _, c := range []struct {
		n, vectors int
		want       float64
	}{{1, 16, 2.131}, {10, 16, 3.286}, {5, 0, 0}} {
		if got := noiseExcursion(c.n, c.vectors); math.Abs(got-c.want) > 1e-3 {
			t.Errorf("noiseExcursion(%d, %d) = %.4f, want %.3f", c.n, c.vectors, got, c.want)
		}
	}
	for _, c := range []struct {
		x    float64
		want int
	}{{7.2, 8}, {16, 16}, {1684.3, 1700}, {310001, 320000}} {
		if got := roundUp2(c.x); got != c.want {
			t.Errorf("roundUp2(%g) = %d, want %d", c.x, got, c.want)
		}
	}
}
