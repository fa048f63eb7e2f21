package model

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"warmfit/lattice"
)

// countByPauli counts terms by their letters.
func countByPauli(terms []lattice.Term) map[string]int {
	out := map[string]int{}
	for _, t := range terms {
		out[t.Pauli]++
	}
	return out
}

func TestPresetTermCounts(t *testing.T) {
	// lattice.Bond counts are closed forms: open chain of L sites L-1 bonds,
	// periodic chain L; open W x H square W(H-1) + H(W-1) nearest and
	// 2(W-1)(H-1) diagonal (next-nearest) bonds; open chain L-2
	// next-nearest bonds; open L-rung ladder 2(L-1) + L; open L^3 cube
	// 3 L^2 (L-1); a periodic lattice of N sites and coordination z has
	// zN/2 bonds (triangular z = 6, honeycomb 3, kagome 4, square 4 for
	// both the nearest and the diagonal shell).
	tests := []struct {
		spec, preset string
		values       map[string]float64
		want         map[string]int
	}{
		// open 6-chain: (L-1) ZZ + L X; hz = 0 by default, left out.
		{"chain:6", "tfim", nil, map[string]int{"ZZ": 5, "X": 6}},
		{"chain:6:periodic", "tfim", nil, map[string]int{"ZZ": 6, "X": 6}},
		{"chain:6", "tfim", map[string]float64{"J": 0}, map[string]int{"X": 6}},
		{"square:3x3", "tfim", map[string]float64{"hz": 0.2}, map[string]int{"ZZ": 12, "X": 9, "Z": 9}},
		// 4x3: 4*2 + 3*3 = 17 bonds, each XX, YY, ZZ.
		{"square:4x3", "xxz", nil, map[string]int{"XX": 17, "YY": 17, "ZZ": 17}},
		{"square:4x3", "xxz", map[string]float64{"Jz": 0, "hx": 1}, map[string]int{"XX": 17, "YY": 17, "X": 12}},
		{"chain:8:periodic", "heisenberg", nil, map[string]int{"XX": 8, "YY": 8, "ZZ": 8}},
		{"chain:5", "heisenberg", map[string]float64{"hz": -1}, map[string]int{"XX": 4, "YY": 4, "ZZ": 4, "Z": 5}},
		{"chain:5", "xy", map[string]float64{"hz": 1}, map[string]int{"XX": 4, "YY": 4, "Z": 5}},
		{"chain:5", "xy", map[string]float64{"Jy": 0}, map[string]int{"XX": 4}},
		// 3x3 with two shells: 12 NN + 8 NNN bonds.
		{"square:3x3:shells=2", "j1j2", nil, map[string]int{"XX": 20, "YY": 20, "ZZ": 20}},
		{"chain:6:shells=2", "j1j2", map[string]float64{"J2": 0}, map[string]int{"XX": 5, "YY": 5, "ZZ": 5}},
		{"chain:6:shells=2", "j1j2", nil, map[string]int{"XX": 9, "YY": 9, "ZZ": 9}},
		{"triangular:4x4:periodic", "tfim", nil, map[string]int{"ZZ": 48, "X": 16}},
		{"honeycomb:3x3:periodic", "heisenberg", nil, map[string]int{"XX": 27, "YY": 27, "ZZ": 27}},
		{"kagome:2x3:periodic", "xy", nil, map[string]int{"XX": 36, "YY": 36}},
		{"cubic:2x2x2", "tfim", nil, map[string]int{"ZZ": 12, "X": 8}},
		{"ladder:5", "xxz", map[string]float64{"hz": 1}, map[string]int{"XX": 13, "YY": 13, "ZZ": 13, "Z": 10}},
		{"square:4x4:periodic:shells=2", "j1j2", nil, map[string]int{"XX": 64, "YY": 64, "ZZ": 64}},
		// A two-shell lattice does not change a nearest-neighbour preset.
		{"square:3x3:shells=2", "tfim", nil, map[string]int{"ZZ": 12, "X": 9}},
		// all2local on open 3x3: 9*12 two-site + 3*9 one-site terms.
		{"square:3x3", "all2local", nil, map[string]int{
			"XX": 12, "XY": 12, "XZ": 12, "YX": 12, "YY": 12, "YZ": 12, "ZX": 12, "ZY": 12, "ZZ": 12,
			"X": 9, "Y": 9, "Z": 9}},
		// all2local uses every interaction bond: 5 NN + 4 NNN on a 6-chain.
		{"chain:6:shells=2", "ALL2LOCAL", nil, map[string]int{
			"XX": 9, "XY": 9, "XZ": 9, "YX": 9, "YY": 9, "YZ": 9, "ZX": 9, "ZY": 9, "ZZ": 9,
			"X": 6, "Y": 6, "Z": 6}},
	}
	for _, tc := range tests {
		t.Run(tc.spec+"/"+tc.preset, func(t *testing.T) {
			l := modelTestLattice(t, tc.spec)
			terms, params, err := PresetTerms(l, tc.preset, tc.values)
			if err != nil {
				t.Fatal(err)
			}
			if got := countByPauli(terms); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("terms by letters %v, want %v", got, tc.want)
			}
			info, err := LookupPreset(tc.preset)
			if err != nil {
				t.Fatal(err)
			}
			// Each coefficient is its parameter's value (given or default).
			for i, term := range terms {
				want := math.NaN()
				for _, p := range info.Params {
					if p.Name == params[i] {
						want = p.Default
					}
				}
				if v, ok := tc.values[params[i]]; ok {
					want = v
				}
				if term.Coeff != want {
					t.Errorf("%s on %v: coeff %v from %s, want %v", term.Pauli, term.Sites, term.Coeff, params[i], want)
				}
			}
			if err := (&Model{Lattice: l, Terms: terms}).Validate(); err != nil {
				t.Error(err)
			}
		})
	}
}

func TestPresetOrderAndLetters(t *testing.T) {
	// On an open 3-chain the xxz preset lays bonds (0,1), (1,2) with XX,
	// YY, ZZ each, then the fields site by site.
	l := modelTestLattice(t, "chain:3")
	terms, err := Preset(l, "xxz", map[string]float64{"Jxy": 2, "Jz": 3, "hx": 5})
	if err != nil {
		t.Fatal(err)
	}
	want := []lattice.Term{
		{Pauli: "XX", Sites: []int{0, 1}, Coeff: 2}, {Pauli: "YY", Sites: []int{0, 1}, Coeff: 2}, {Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 3},
		{Pauli: "XX", Sites: []int{1, 2}, Coeff: 2}, {Pauli: "YY", Sites: []int{1, 2}, Coeff: 2}, {Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 3},
		{Pauli: "X", Sites: []int{0}, Coeff: 5}, {Pauli: "X", Sites: []int{1}, Coeff: 5}, {Pauli: "X", Sites: []int{2}, Coeff: 5},
	}
	if !reflect.DeepEqual(terms, want) {
		t.Errorf("got %+v\nwant %+v", terms, want)
	}
	// all2local: "XZ" has X on the lower site of the bond.
	terms, err = Preset(l, "all2local", map[string]float64{"XZ": 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, term := range terms {
		if term.Pauli == "XZ" && (term.Coeff != 1 || term.Sites[0] > term.Sites[1]) {
			t.Errorf("%+v", term)
		}
		if term.Pauli != "XZ" && term.Coeff != 0 {
			t.Errorf("%+v should default to 0", term)
		}
	}
}

func TestPresetErrors(t *testing.T) {
	chain := modelTestLattice(t, "chain:4")
	tests := []struct {
		preset string
		values map[string]float64
		msg    []string
	}{
		{"ising", nil, []string{"unknown preset", "tfim", "all2local"}},
		{"tfim", map[string]float64{"h": 1, "K": 2}, []string{`no parameter "K"`, "J, hx, hz"}},
		{"all2local", map[string]float64{"II": 1}, []string{`"II"`, "XX, XY"}},
		{"j1j2", nil, []string{"next-nearest", "shells=2", "--shells 2"}},
		{"tfim", map[string]float64{"J": 0, "hx": 0}, []string{"every coefficient is zero"}},
		{"xy", map[string]float64{"Jx": math.NaN()}, []string{"finite"}},
		{"heisenberg", map[string]float64{"J": math.Inf(1)}, []string{"finite"}},
	}
	for _, tc := range tests {
		_, err := Preset(chain, tc.preset, tc.values)
		if err == nil {
			t.Errorf("%s %v: no error", tc.preset, tc.values)
			continue
		}
		for _, m := range tc.msg {
			if !strings.Contains(err.Error(), m) {
				t.Errorf("%s %v: error %q lacks %q", tc.preset, tc.values, err, m)
			}
		}
	}
}

func TestTieUniform(t *testing.T) {
	l := modelTestLattice(t, "square:3x3:shells=2")
	terms, params, err := PresetTerms(l, "j1j2", map[string]float64{"hz": 0.1})
	if err != nil {
		t.Fatal(err)
	}
	TieUniform(terms, params)
	// Closed form: 12 NN bonds x 3 letters share J1, 8 NNN x 3 share J2,
	// 9 sites share hz.
	sizes := map[string]int{}
	for _, term := range terms {
		sizes[term.Group]++
	}
	if want := map[string]int{"J1": 36, "J2": 24, "hz": 9}; !reflect.DeepEqual(sizes, want) {
		t.Errorf("group sizes %v, want %v", sizes, want)
	}
}

func TestAddDisorder(t *testing.T) {
	l := modelTestLattice(t, "square:10x10")
	base, err := Preset(l, "all2local", map[string]float64{"ZZ": 1})
	if err != nil {
		t.Fatal(err)
	}
	apply := func(w float64, seed uint64) []lattice.Term {
		ts := make([]lattice.Term, len(base))
		copy(ts, base)
		AddDisorder(ts, w, seed)
		return ts
	}
	const w = 0.25
	a, b, c := apply(w, 42), apply(w, 42), apply(w, 43)
	if !reflect.DeepEqual(a, b) {
		t.Error("same seed, different disorder")
	}
	if reflect.DeepEqual(a, c) {
		t.Error("different seeds, same disorder")
	}
	if z := apply(0, 42); !reflect.DeepEqual(z, base) {
		t.Error("zero width changed the coefficients")
	}
	// Shifts lie in [-W, W); their mean is 0 and variance W^2/3 (uniform
	// distribution on [-W, W], closed form). With n = 1920 shifts (180 bonds x 9 + 100 sites x 3) the
	// sample mean has standard deviation W/sqrt(3n) and the sample variance
	// about W^2 sqrt(4/(45 n)) (fourth moment W^4/5); 5 sigma bounds.
	n := float64(len(a))
	var sum, sum2 float64
	for i := range a {
		d := a[i].Coeff - base[i].Coeff
		if d < -w || d >= w {
			t.Fatalf("shift %v outside [-%v, %v)", d, w, w)
		}
		sum += d
		sum2 += d * d
	}
	mean := sum / n
	variance := sum2/n - mean*mean
	if math.Abs(mean) > 5*w/math.Sqrt(3*n) {
		t.Errorf("mean shift %v", mean)
	}
	if math.Abs(variance-w*w/3) > 5*w*w*math.Sqrt(4/(45*n)) {
		t.Errorf("shift variance %v, want %v", variance, w*w/3)
	}
}

func TestAddDisorderPanicsOnBadWidth(t *testing.T) {
	for _, w := range []float64{-1, math.NaN(), math.Inf(1)} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("width %v: no panic", w)
				}
			}()
			AddDisorder([]lattice.Term{{Pauli: "Z", Sites: []int{0}}}, w, 1)
		}()
	}
}

func TestPresetsListed(t *testing.T) {
	names := PresetNames()
	want := []string{"tfim", "xxz", "heisenberg", "xy", "j1j2", "all2local"}
	if !reflect.DeepEqual(names, want) {
		t.Errorf("presets %v, want %v", names, want)
	}
	for _, p := range Presets() {
		if p.Hamiltonian == "" || len(p.Params) == 0 {
			t.Errorf("preset %s undocumented", p.Name)
		}
	}
}
