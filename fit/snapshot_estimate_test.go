package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"warmfit/lattice"
)

func mustLattice(t testing.TB, spec string) *lattice.Lattice {
	t.Helper()
	l, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	return l
}

func mustTerm(t testing.TB, pauli string, sites ...int) lattice.Term {
	t.Helper()
	term, err := lattice.NewTerm(pauli, sites, 0)
	if err != nil {
		t.Fatal(err)
	}
	return term
}

// handFile has 10 shots on 3 qubits; the expected numbers of
// TestSnapshotEstimateHandCounted are counted from it by hand.
const handFile = `basis,outcome,count
# hand-counted example
ZZZ,000,3
ZZZ,011,1
ZZX,010,2
ZZX,111,1
XXX,110,2
XXX,000,1
`

func handTerms(t testing.TB) []lattice.Term {
	return []lattice.Term{
		mustTerm(t, "Z", 0),         // 0
		mustTerm(t, "Z", 1),         // 1
		mustTerm(t, "ZZ", 0, 1),     // 2
		mustTerm(t, "X", 2),         // 3
		mustTerm(t, "ZX", 1, 2),     // 4
		mustTerm(t, "XX", 0, 1),     // 5
		mustTerm(t, "Y", 0),         // 6: no basis measures it
		mustTerm(t, "ZZX", 0, 1, 2), // 7
	}
}

func TestSnapshotEstimateHandCounted(t *testing.T) {
	terms := handTerms(t)
	est, err := EstimateSnapshots(strings.NewReader(handFile), "hand.csv", 3, terms,
		CovarianceOptions{AllPairs: true, AllowMissing: []int{6}})
	if err != nil {
		t.Fatal(err)
	}
	// Counting by hand, shots listed as (basis outcome)xcount; x = +1 for
	// '0', -1 for '1', multiplied over the support:
	//   ZZZ 000 x3: Z0 +1, Z1 +1, Z0Z1 +1
	//   ZZZ 011 x1: Z0 +1, Z1 -1, Z0Z1 -1
	//   ZZX 010 x2: Z0 +1, Z1 -1, Z0Z1 -1, X2 +1, Z1X2 -1, Z0Z1X2 -1
	//   ZZX 111 x1: Z0 -1, Z1 -1, Z0Z1 +1, X2 -1, Z1X2 +1, Z0Z1X2 -1
	//   XXX 110 x2: X2 +1, X0X1 +1
	//   XXX 000 x1: X2 +1, X0X1 +1
	// so (N, sum): Z0 (7, 5), Z1 (7, -1), Z0Z1 (7, 1), X2 (6, 4),
	// Z1X2 (3, -1), X0X1 (3, 3), Y0 (0, -), Z0Z1X2 (3, -3).
	// Variance of the mean: max((1-m²)/(N-1), 4p(1-p)/(N+3)) with
	// p = (k+1)/(N+2), k = (N+sum)/2 the +1 count (uniform-prior posterior,
	// Laplace's rule of succession):
	//   Z0: max(4/49, 56/810) = 4/49;  Z1, Z0Z1: max(8/49, 80/810) = 8/49
	//   X2: max(1/9, 0.75/9) = 1/9;    Z1X2: max(4/9, 0.96/6) = 4/9
	//   X0X1: max(0, 0.64/6) = 0.64/6; Z0Z1X2: same as X0X1 = 0.64/6.
	wantN := []int64{7, 7, 7, 6, 3, 3, 0, 3}
	wantV := []float64{5.0 / 7, -1.0 / 7, 1.0 / 7, 4.0 / 6, -1.0 / 3, 1, math.NaN(), -1}
	wantVar := []float64{4.0 / 49, 8.0 / 49, 8.0 / 49, 1.0 / 9, 4.0 / 9, 0.64 / 6, math.NaN(), 0.64 / 6}
	for k := range terms {
		if est.Shots[k] != wantN[k] || !closeOrNaN(est.Values[k], wantV[k]) || !closeOrNaN(est.Stderr[k], math.Sqrt(wantVar[k])) {
			t.Errorf("%s: got N=%d value=%v stderr=%v; want %d %v %v", terms[k].Key(), est.Shots[k], est.Values[k], est.Stderr[k],
				wantN[k], wantV[k], math.Sqrt(wantVar[k]))
		}
	}
	if fmt.Sprint(est.Missing) != "[6]" {
		t.Errorf("Missing = %v, want [6]", est.Missing)
	}
	// Covariances N_ab c_ab/(N_a N_b), c_ab the sample covariance over
	// the N_ab shared shots (means over those shots), by hand:
	//   Z0,Z1 (7 shared): P=1, A=5, B=-1: c=(1+5/7)/6=2/7 -> 2/49
	//   Z0,Z0Z1: P=-1, A=5, B=1: c=-2/7 -> -2/49
	//   Z1,Z0Z1: P=5, A=-1, B=1: c=6/7 -> 6/49
	//   Z0,X2 (ZZX, 3 shared): x=(1,1,-1),(1,1,-1): c=4/3 -> 3(4/3)/42 = 2/21
	//   Z0,Z1X2: (1,1,-1),(-1,-1,1): c=-4/3 -> -4/21
	//   Z1,X2: (-1,-1,-1),(1,1,-1): c=0;  Z1,Z1X2: c=0
	//   Z0Z1,X2: (-1,-1,1),(1,1,-1): c=-4/3 -> -2/21
	//   Z0Z1,Z1X2: (-1,-1,1),(-1,-1,1): c=4/3 -> 4/21
	//   X2,Z1X2: c=-4/3 -> -4/18
	//   X2,X0X1 (XXX, 3 shared): X0X1 constant: c=0
	//   Z0Z1X2 is constant -1 on its shots: c=0 with every partner.
	//   Pairs with clashing letters (Z0 and X0X1, ...) share no shot: 0.
	wantCov := map[[2]int]float64{
		{0, 1}: 2.0 / 49, {0, 2}: -2.0 / 49, {1, 2}: 6.0 / 49,
		{0, 3}: 2.0 / 21, {0, 4}: -4.0 / 21, {1, 3}: 0, {1, 4}: 0,
		{2, 3}: -2.0 / 21, {2, 4}: 4.0 / 21, {3, 4}: -4.0 / 18, {3, 5}: 0,
	}
	for a := range terms {
		for b := range terms {
			if a == b {
				continue
			}
			key := [2]int{min(a, b), max(a, b)}
			if got := est.Cov.At(a, b); math.Abs(got-wantCov[key]) > 1e-15 {
				t.Errorf("Cov(%s, %s) = %v, want %v", terms[a].Key(), terms[b].Key(), got, wantCov[key])
			}
		}
		if a != 6 && math.Abs(est.Cov.At(a, a)-wantVar[a]) > 1e-15 {
			t.Errorf("Var(%s) = %v, want %v", terms[a].Key(), est.Cov.At(a, a), wantVar[a])
		}
	}

	// Without AllowMissing the unmeasured Y0 is an error naming it.
	_, err = EstimateSnapshots(strings.NewReader(handFile), "hand.csv", 3, terms, CovarianceOptions{})
	if err == nil || !strings.Contains(err.Error(), "hand.csv: 1 of 8 terms (1 Y) have no usable data: Y 0 (no shot measured its letters). What to do: measure them") {
		t.Errorf("missing term: got %v", err)
	}
}

func closeOrNaN(got, want float64) bool {
	if math.IsNaN(want) {
		return math.IsNaN(got)
	}
	return math.Abs(got-want) <= 1e-14*max(1, math.Abs(want))
}

func TestSnapshotEstimateDistance(t *testing.T) {
	// Chain 0-1-2-3-4 with fields and ZZ bonds: which pairs each
	// Distance keeps, counted from the chain geometry.
	terms := []lattice.Term{
		mustTerm(t, "Z", 0), mustTerm(t, "Z", 1), mustTerm(t, "Z", 2), mustTerm(t, "Z", 3), mustTerm(t, "Z", 4),
		mustTerm(t, "ZZ", 0, 1), mustTerm(t, "ZZ", 1, 2), mustTerm(t, "ZZ", 2, 3), mustTerm(t, "ZZ", 3, 4),
	}
	dist := func(a, b lattice.Term) int { // graph distance between supports on a chain
		d := 1 << 30
		for _, s := range a.Sites {
			for _, u := range b.Sites {
				d = min(d, max(s-u, u-s))
			}
		}
		return d
	}
	for _, maxd := range []int{-1, 0, 1, 2} {
		pairsOf, npairs, err := covariancePairs(5, terms, CovarianceOptions{Distance: maxd})
		if err != nil {
			t.Fatal(err)
		}
		want := 0
		for a := range terms {
			for b := a + 1; b < len(terms); b++ {
				kept := false
				for _, r := range pairsOf[a] {
					kept = kept || int(r.other) == b
				}
				if inRange := dist(terms[a], terms[b]) <= maxd; kept != inRange {
					t.Errorf("Distance %d: pair %s, %s kept=%v", maxd, terms[a].Key(), terms[b].Key(), kept)
				}
				if dist(terms[a], terms[b]) <= maxd {
					want++
				}
			}
		}
		if npairs != want {
			t.Errorf("Distance %d: %d pairs, want %d", maxd, npairs, want)
		}
	}
	// An explicit neighbour function (a ring closing 4-0) widens the
	// neighbourhood: Z0 and Z4 become adjacent.
	ring := func(s int) []int { return []int{(s + 4) % 5, (s + 1) % 5} }
	pairsOf, _, err := covariancePairs(5, terms, CovarianceOptions{Distance: 1, Neighbors: ring})
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, r := range pairsOf[0] {
		found = found || r.other == 4
	}
	if !found {
		t.Error("ring neighbours: Z0, Z4 not kept")
	}
}

// expandedShot is one shot of a brute-force shot list.
type expandedShot struct{ basis, outcome string }

// bruteEstimates recomputes means, variances and covariances from an
// expanded shot list with the textbook formulas (floating point, two
// passes), as an independent check of the integer streaming sums.
func bruteEstimates(terms []lattice.Term, shots []expandedShot) (mean, variance []float64, cov [][]float64) {
	x := func(t lattice.Term, s expandedShot) (float64, bool) {
		v := 1.0
		for i, site := range t.Sites {
			if s.basis[site] != t.Pauli[i] {
				return 0, false
			}
			if s.outcome[site] == '1' {
				v = -v
			}
		}
		return v, true
	}
	K := len(terms)
	mean, variance = make([]float64, K), make([]float64, K)
	count := make([]float64, K)
	for k, t := range terms {
		for _, s := range shots {
			if v, ok := x(t, s); ok {
				mean[k] += v
				count[k]++
			}
		}
		mean[k] /= count[k]
		var ss float64
		for _, s := range shots {
			if v, ok := x(t, s); ok {
				ss += (v - mean[k]) * (v - mean[k])
			}
		}
		// Sample variance over N, floored by the uniform-prior posterior
		// variance of e = 2p - 1 under Beta(k+1, N-k+1).
		n := count[k]
		plus := (n + mean[k]*n) / 2
		alpha, beta := plus+1, n-plus+1
		post := 4 * alpha * beta / ((alpha + beta) * (alpha + beta) * (alpha + beta + 1))
		variance[k] = max(ss/(n-1)/n, post)
	}
	cov = make([][]float64, K)
	for a := range terms {
		cov[a] = make([]float64, K)
		for b := range terms {
			var xa, xb []float64
			for _, s := range shots {
				va, oka := x(terms[a], s)
				vb, okb := x(terms[b], s)
				if oka && okb {
					xa, xb = append(xa, va), append(xb, vb)
				}
			}
			if len(xa) < 2 {
				continue
			}
			var ma, mb float64
			for i := range xa {
				ma += xa[i]
				mb += xb[i]
			}
			ma /= float64(len(xa))
			mb /= float64(len(xb))
			var c float64
			for i := range xa {
				c += (xa[i] - ma) * (xb[i] - mb)
			}
			c /= float64(len(xa) - 1)
			cov[a][b] = float64(len(xa)) * c / (count[a] * count[b])
		}
	}
	return mean, variance, cov
}

func TestSnapshotEstimateBruteForce(t *testing.T) {
	const n = 5
	var terms []lattice.Term
	for s := 0; s < n; s++ {
		for _, l := range []string{"X", "Y", "Z"} {
			terms = append(terms, mustTerm(t, l, s))
		}
	}
	for s := 0; s+1 < n; s++ {
		for _, p := range []string{"XX", "XZ", "ZY", "YY", "ZZ"} {
			terms = append(terms, mustTerm(t, p, s, s+1))
		}
	}
	rng := rand.New(rand.NewPCG(7, 8))
	cover, err := CoveringBases(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	bases := append(RandomBases(n, 6, 3), cover...)
	// Random shots with a bias so means are not all near zero; merged
	// counts up to 3, a few bases repeated many times.
	var shots []expandedShot
	type line struct {
		b, o string
		c    int64
	}
	var lines []line
	for i := 0; i < 400; i++ {
		b := bases[rng.IntN(len(bases))]
		o := make([]byte, n)
		for s := range o {
			o[s] = '0'
			if rng.Float64() < 0.3+0.1*float64(s) {
				o[s] = '1'
			}
		}
		c := int64(1 + rng.IntN(3))
		if rng.IntN(2) == 0 {
			c = 1
		}
		lines = append(lines, line{b, string(o), c})
		for range c {
			shots = append(shots, expandedShot{b, string(o)})
		}
		// Long runs of single shots in one basis fill whole 64-shot
		// batches of the plan path.
		if i%100 == 0 {
			for range 150 {
				for s := range o {
					o[s] = '0' + byte(rng.IntN(2))
				}
				lines = append(lines, line{b, string(o), 1})
				shots = append(shots, expandedShot{b, string(o)})
			}
		}
	}
	mean, variance, cov := bruteEstimates(terms, shots)

	for _, opt := range []CovarianceOptions{{AllPairs: true}, {Distance: 0}, DefaultCovarianceOptions(), {Distance: -1}} {
		for _, budget := range []int{maxPlanBytes, 1} { // 1: plans are folded in after every basis change
			e, err := NewSnapshotEstimator(n, terms, opt)
			if err != nil {
				t.Fatal(err)
			}
			e.planBudget = budget
			for _, l := range lines {
				if err := e.Add(l.b, l.o, l.c); err != nil {
					t.Fatal(err)
				}
			}
			est, err := e.Result()
			if err != nil {
				t.Fatal(err)
			}
			if e.Shots() != int64(len(shots)) {
				t.Fatalf("Shots() = %d, want %d", e.Shots(), len(shots))
			}
			pairsOf, _, _ := covariancePairs(n, terms, opt)
			for a := range terms {
				// Brute force, two-pass formulas: agreement to rounding.
				if math.Abs(est.Values[a]-mean[a]) > 1e-13 || math.Abs(est.Cov.At(a, a)-variance[a]) > 1e-13 {
					t.Fatalf("%+v: %s: got %v, %v; brute force %v, %v", opt, terms[a].Key(), est.Values[a], est.Cov.At(a, a), mean[a], variance[a])
				}
				kept := map[int]bool{}
				for _, r := range pairsOf[a] {
					kept[int(r.other)] = true
				}
				for b := a + 1; b < len(terms); b++ {
					want := 0.0
					if kept[b] {
						want = cov[a][b]
					}
					if got := est.Cov.At(a, b); math.Abs(got-want) > 1e-13 {
						t.Fatalf("%+v budget %d: Cov(%s, %s) = %v, brute force %v", opt, budget, terms[a].Key(), terms[b].Key(), got, want)
					}
				}
			}
		}
	}

	// Shot order and merging do not change a bit of the result: sums are
	// exact integers.
	shuffled := append([]expandedShot(nil), shots...)
	rng.Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	merged, _ := NewSnapshotEstimator(n, terms, DefaultCovarianceOptions())
	single, _ := NewSnapshotEstimator(n, terms, DefaultCovarianceOptions())
	for _, l := range lines {
		merged.Add(l.b, l.o, l.c)
	}
	for _, s := range shuffled {
		single.Add(s.basis, s.outcome, 1)
	}
	em, _ := merged.Result()
	es, _ := single.Result()
	for a := range terms {
		for b := range terms {
			if math.Float64bits(em.Cov.At(a, b)) != math.Float64bits(es.Cov.At(a, b)) {
				t.Fatalf("order dependence at (%d,%d): %v vs %v", a, b, em.Cov.At(a, b), es.Cov.At(a, b))
			}
		}
	}
}

func TestSnapshotEstimatorErrors(t *testing.T) {
	terms := []lattice.Term{mustTerm(t, "Z", 0)}
	if _, err := NewSnapshotEstimator(2, []lattice.Term{mustTerm(t, "Z", 2)}, CovarianceOptions{}); err == nil ||
		!strings.Contains(err.Error(), "site 2 is out of range: the system has 2 sites") {
		t.Errorf("site out of range: %v", err)
	}
	if _, err := NewSnapshotEstimator(2, []lattice.Term{{Pauli: "XZ", Sites: []int{1, 0}}}, CovarianceOptions{}); err == nil {
		t.Error("non-canonical term accepted")
	}
	if _, err := NewSnapshotEstimator(2, []lattice.Term{mustTerm(t, "ZX", 0, 1), mustTerm(t, "Z", 0), mustTerm(t, "ZX", 0, 1)}, CovarianceOptions{}); err == nil ||
		!strings.Contains(err.Error(), "terms 0 and 2 are both ZX 0 1") {
		t.Errorf("duplicate terms: %v", err)
	}
	if _, err := NewSnapshotEstimator(2, terms, CovarianceOptions{AllowMissing: []int{3}}); err == nil {
		t.Error("bad AllowMissing accepted")
	}
	e, _ := NewSnapshotEstimator(2, terms, CovarianceOptions{})
	for _, c := range []struct {
		b, o string
		n    int64
	}{{"Z", "00", 1}, {"ZQ", "00", 1}, {"ZZ", "0", 1}, {"ZZ", "0a", 1}, {"ZZ", "00", 0}} {
		if err := e.Add(c.b, c.o, c.n); err == nil {
			t.Errorf("Add(%q, %q, %d) accepted", c.b, c.o, c.n)
		}
	}
	if err := e.Add("ZZ", "01", 1<<62+1); err == nil {
		t.Error("more than 2^62 shots accepted")
	}
	e.Add("ZZ", "01", 1)
	if _, err := e.Result(); err == nil || !strings.Contains(err.Error(), "Z 0 (only 1 shot)") {
		t.Errorf("one shot: %v", err)
	}
	// Many missing terms: the first ten are named, then a count.
	var many []lattice.Term
	for s := 0; s < 12; s++ {
		many = append(many, mustTerm(t, "X", s))
	}
	e, _ = NewSnapshotEstimator(12, many, CovarianceOptions{})
	e.Add(strings.Repeat("Z", 12), strings.Repeat("0", 12), 5)
	if _, err := e.Result(); err == nil || !strings.Contains(err.Error(), "12 of 12 terms") || !strings.Contains(err.Error(), "X 9 (no shot measured its letters); and 2 more") {
		t.Errorf("many missing: %v", err)
	}
}
