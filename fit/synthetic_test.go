package fit

import (
	"bytes"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
	"warmfit/lattice"
)

// binomialLogPMF is log P(K = k) for K ~ Binomial(n, p), from log-gamma.
func binomialLogPMF(n, k int64, p float64) float64 {
	ln, _ := math.Lgamma(float64(n) + 1)
	lk, _ := math.Lgamma(float64(k) + 1)
	lnk, _ := math.Lgamma(float64(n-k) + 1)
	return ln - lk - lnk + float64(k)*math.Log(p) + float64(n-k)*math.Log1p(-p)
}

func TestBinomialChiSquare(t *testing.T) {
	const draws = 20000
	for _, tc := range []struct {
		n int64
		p float64
	}{
		{3, 0.9},              // inversion on the flipped p = 0.1
		{20, 0.3},             // inversion, n p = 6
		{1_000_000, 3e-6},     // inversion, large n, n p = 3
		{30, 0.34},            // BTRD just above n p = 10
		{100, 0.1},            // BTRD at n p = 10
		{1000, 0.5},           // BTRD, symmetric
		{10_000_000, 0.999},   // BTRD on the flipped p, n(1-p) = 10^4
		{1_000_000_000, 0.37}, // BTRD, huge n: far tails use Stirling's series
	} {
		rng := rand.New(rand.NewPCG(uint64(tc.n), 12345))
		samples := make([]int64, draws)
		var sum, sumsq float64
		for i := range samples {
			k := binomial(rng, tc.n, tc.p)
			if k < 0 || k > tc.n {
				t.Fatalf("n=%d p=%v: draw %d out of range", tc.n, tc.p, k)
			}
			samples[i] = k
			sum += float64(k)
			sumsq += float64(k) * float64(k)
		}
		// Mean n p and variance n p (1 - p) of the binomial law (closed
		// form); sample mean within 5 standard errors, sample variance
		// within 5 of its standard errors, Var(s²) ≈ σ⁴(2 + γ₂)/M with the
		// binomial excess kurtosis γ₂ = (1 - 6pq)/(npq) (closed form).
		mean := float64(tc.n) * tc.p
		variance := mean * (1 - tc.p)
		m := sum / draws
		s2 := (sumsq - draws*m*m) / (draws - 1)
		if math.Abs(m-mean) > 5*math.Sqrt(variance/draws) {
			t.Errorf("n=%d p=%v: mean %v, want %v", tc.n, tc.p, m, mean)
		}
		kurt := (1 - 6*tc.p*(1-tc.p)) / variance
		if math.Abs(s2-variance) > 5*variance*math.Sqrt((2+kurt)/draws) {
			t.Errorf("n=%d p=%v: variance %v, want %v", tc.n, tc.p, s2, variance)
		}

		// Pearson chi-square against the exact probabilities: cells of
		// consecutive k with expected count >= 20, tails merged
		// (common practice); reject beyond the 1 - 1e-4 quantile.
		sd := math.Sqrt(variance)
		lo := max(0, int64(mean-10*sd-5))
		hi := min(tc.n, int64(mean+10*sd+5))
		var cellsExp []float64
		var cellsEnd []int64 // last k of each cell
		acc := 0.0
		for k := lo; k <= hi; k++ {
			acc += draws * math.Exp(binomialLogPMF(tc.n, k, tc.p))
			if acc >= 20 {
				cellsExp = append(cellsExp, acc)
				cellsEnd = append(cellsEnd, k)
				acc = 0
			}
		}
		// Mass outside [lo, hi] (beyond 10 sd, < 1e-20 of the total by
		// Chernoff bound) and the unfinished last cell join the last cell.
		cellsExp[len(cellsExp)-1] += acc
		cellsEnd[len(cellsEnd)-1] = tc.n
		obs := make([]float64, len(cellsExp))
		for _, k := range samples {
			c, _ := slices.BinarySearch(cellsEnd, k)
			obs[c]++
		}
		chi2 := 0.0
		for c := range obs {
			d := obs[c] - cellsExp[c]
			chi2 += d * d / cellsExp[c]
		}
		df := float64(len(obs) - 1)
		limit := distuv.ChiSquared{K: df}.Quantile(1 - 1e-4)
		if chi2 > limit {
			t.Errorf("n=%d p=%v: chi-square %.1f with %v dof exceeds %.1f", tc.n, tc.p, chi2, df, limit)
		}
		t.Logf("n=%d p=%v: chi-square %.1f / %v dof (limit %.1f)", tc.n, tc.p, chi2, df, limit)
	}
}

func TestBinomialEdges(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		n    int64
		p    float64
		want int64
	}{{0, 0.5, 0}, {10, 0, 0}, {10, 1, 10}, {-3, 0.5, 0}} {
		if got := binomial(rng, tc.n, tc.p); got != tc.want {
			t.Errorf("binomial(%d, %v) = %d, want %d", tc.n, tc.p, got, tc.want)
		}
	}
	// Stirling remainder against log-gamma at k >= 10 (series truncation
	// bound 1/(1680 (k+1)^7)).
	for _, k := range []float64{10, 11, 50, 1e4} {
		lg, _ := math.Lgamma(k + 1)
		want := lg - (0.5*math.Log(2*math.Pi) + (k+0.5)*math.Log(k+1) - (k + 1))
		if math.Abs(stirlingTail(k)-want) > 1e-10 {
			t.Errorf("stirlingTail(%v) = %v, log-gamma gives %v", k, stirlingTail(k), want)
		}
	}
}

func TestSyntheticTable(t *testing.T) {
	const e, nshots, K = 0.3, 1000, 3000
	terms := make([]lattice.Term, K)
	expect := make([]float64, K)
	shots := make([]int64, K)
	for k := range terms {
		terms[k] = mustTerm(t, "Z", k)
		expect[k] = e
		shots[k] = nshots
	}
	tab, err := SyntheticTableFromShots(terms, expect, shots, 99)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(tab.Comments, SyntheticComment) {
		t.Errorf("comments %q lack %q", tab.Comments, SyntheticComment)
	}
	again, _ := SyntheticTableFromShots(terms, expect, shots, 99)
	if !reflect.DeepEqual(tab, again) {
		t.Fatal("same seed, different tables")
	}
	// Estimates are means of N ±1 outcomes: variance (1 - e²)/N
	// (references.md, measurement statistics). Across K independent
	// terms the z-scores have mean 0 and variance 1 within
	// 5/sqrt(K) and 5 sqrt(2/K) (common practice).
	var zs, zz, se float64
	for _, r := range tab.Rows {
		z := (r.Value - e) / math.Sqrt((1-e*e)/nshots)
		zs += z
		zz += z * z
		se += r.Stderr
		if r.Extra[0] != "1000" {
			t.Fatalf("shots column %q", r.Extra[0])
		}
	}
	zmean, zvar := zs/K, zz/K-(zs/K)*(zs/K)
	if math.Abs(zmean) > 5/math.Sqrt(K) || math.Abs(zvar-1) > 5*math.Sqrt(2.0/K) {
		t.Errorf("z-scores: mean %v, variance %v", zmean, zvar)
	}
	if want := math.Sqrt((1 - e*e) / nshots); math.Abs(se/K-want) > 0.01*want {
		t.Errorf("mean stderr %v, want about %v", se/K, want)
	}
	var buf bytes.Buffer
	if err := WriteTable(&buf, tab); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadTable(&buf, "synthetic.csv"); err != nil {
		t.Fatal(err)
	}
}

func TestSyntheticTableBases(t *testing.T) {
	terms := []lattice.Term{mustTerm(t, "Z", 0), mustTerm(t, "ZZ", 0, 1), mustTerm(t, "X", 1)}
	bases := []string{"ZZ", "ZX", "XX"}
	// e = ±1 exactly: every shot agrees, the estimate is exact and the
	// stderr is the uniform-prior floor 4 p(1-p)/(N+3), p = (N+1)/(N+2).
	tab, err := SyntheticTable(terms, []float64{1, -1, 1}, bases, 50, 5)
	if err != nil {
		t.Fatal(err)
	}
	for k, r := range tab.Rows {
		n := float64(ShotsPerTerm(bases, 50, terms)[k]) // by hand: 100, 50, 100
		p := (n + 1) / (n + 2)
		if math.Abs(math.Abs(r.Value)-1) != 0 || math.Abs(r.Stderr-math.Sqrt(4*p*(1-p)/(n+3))) > 1e-15 {
			t.Errorf("%s: %v ± %v", r.Key(), r.Value, r.Stderr)
		}
	}
	if tab.Rows[1].Extra[0] != "50" || tab.Rows[0].Extra[0] != "100" {
		t.Errorf("shots %v %v", tab.Rows[0].Extra, tab.Rows[1].Extra)
	}

	for _, tc := range []struct {
		name   string
		expect []float64
		bases  []string
		want   string
	}{
		{"thin", []float64{0, 0, 0}, []string{"ZZ"}, "X 1 (0 shots)"},
		{"range", []float64{0, 1.5, 0}, bases, "expectation 1.5 is not in [-1, 1]"},
		{"NaN", []float64{math.NaN(), 0, 0}, bases, "expectation NaN"},
		{"length", []float64{0}, bases, "3 terms but 1 expectations"},
		{"basis", []float64{0, 0, 0}, []string{"ZZ", "Z"}, "basis 1"},
	} {
		_, err := SyntheticTable(terms, tc.expect, tc.bases, 10, 1)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: got %v, want %q", tc.name, err, tc.want)
		}
	}
}
