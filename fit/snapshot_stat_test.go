package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"warmfit/lattice"
)

// separableState is a mixture of product states, rho = sum_j w_j
// prod_i rho_i^(j), each rho_i^(j) with Bloch vector bloch[j][i] (|r| <=
// 1). Measuring qubit i in letter L gives +1 with probability
// (1 + r_L)/2 given the component, so every moment is a closed form: the
// mixture-weighted product of Bloch components over the sites involved.
// Distinct sites are correlated through the mixture, so adjacent and
// overlapping terms have non-zero covariances.
type separableState struct {
	w     []float64
	bloch [][][3]float64 // [component][site] -> (X, Y, Z)
}

func letterIndex(c byte) int { return int(c - 'X') }

func (st *separableState) sample(rng *rand.Rand, basis string, out []byte) {
	u := rng.Float64()
	j := 0
	for j < len(st.w)-1 && u >= st.w[j] {
		u -= st.w[j]
		j++
	}
	for i := range out {
		r := st.bloch[j][i][letterIndex(basis[i])]
		out[i] = '1'
		if rng.Float64() < (1+r)/2 {
			out[i] = '0'
		}
	}
}

// moment is E[prod over sites of x_i] for the given letters per site.
func (st *separableState) moment(lets map[int]byte) float64 {
	var m float64
	for j, w := range st.w {
		p := w
		for s, l := range lets {
			p *= st.bloch[j][s][letterIndex(l)]
		}
		m += p
	}
	return m
}

// exactCov returns e_a, and for a pair the shot-level covariance c_ab =
// E[x_a x_b] - e_a e_b and E[(x_a-e_a)^2 (x_b-e_b)^2], all closed forms:
// on shared sites x^2 = 1, so x_a x_b is the product over the symmetric
// difference of the supports.
func (st *separableState) exactCov(a, b lattice.Term) (ea, eb, c, fourth float64) {
	la, lb, lab := map[int]byte{}, map[int]byte{}, map[int]byte{}
	for i, s := range a.Sites {
		la[s] = a.Pauli[i]
		lab[s] = a.Pauli[i]
	}
	for i, s := range b.Sites {
		lb[s] = b.Pauli[i]
		if _, shared := lab[s]; shared {
			delete(lab, s)
		} else {
			lab[s] = b.Pauli[i]
		}
	}
	ea, eb = st.moment(la), st.moment(lb)
	eab := st.moment(lab)
	c = eab - ea*eb
	// (x_a - e_a)^2 = 1 + e_a^2 - 2 e_a x_a since x_a^2 = 1.
	fourth = (1+ea*ea)*(1+eb*eb) - 2*ea*(1+eb*eb)*ea - 2*eb*(1+ea*ea)*eb + 4*ea*eb*eab
	return ea, eb, c, fourth
}

func testState() *separableState {
	return &separableState{
		w: []float64{0.5, 0.3, 0.2},
		bloch: [][][3]float64{
			{{0.6, 0.1, 0.7}, {0.5, -0.2, 0.8}, {0.1, 0.3, 0.9}, {-0.4, 0.2, 0.6}},
			{{-0.3, 0.5, -0.6}, {0.2, 0.6, -0.7}, {-0.5, 0.1, -0.5}, {0.3, -0.6, -0.4}},
			{{0.0, -0.8, 0.3}, {-0.7, 0.1, 0.2}, {0.4, -0.4, 0.5}, {0.6, 0.5, -0.2}},
		},
	}
}

func statTerms(t testing.TB) []lattice.Term {
	const n = 4
	var terms []lattice.Term
	for s := 0; s < n; s++ {
		for _, l := range []string{"X", "Y", "Z"} {
			terms = append(terms, mustTerm(t, l, s))
		}
	}
	for s := 0; s+1 < n; s++ {
		for _, p := range all2local {
			terms = append(terms, mustTerm(t, p, s, s+1))
		}
	}
	return terms
}

// exactMeanCov is the covariance of the estimates under the design "every
// basis measured perBasis times": N_ab c_ab / (N_a N_b).
func exactMeanCov(st *separableState, terms []lattice.Term, bases []string, perBasis int64, a, b int) float64 {
	na := ShotsPerTerm(bases, perBasis, terms[a:a+1])[0]
	nb := ShotsPerTerm(bases, perBasis, terms[b:b+1])[0]
	var nab int64
	for _, B := range bases {
		if Serves(B, terms[a]) && Serves(B, terms[b]) {
			nab += perBasis
		}
	}
	_, _, c, _ := st.exactCov(terms[a], terms[b])
	return float64(nab) * c / (float64(na) * float64(nb))
}

func TestSnapshotCovarianceStatistics(t *testing.T) {
	st := testState()
	terms := statTerms(t)
	bases, err := CoveringBases(4, terms)
	if err != nil {
		t.Fatal(err)
	}
	const perBasis = 20000
	rng := rand.New(rand.NewPCG(2024, 1))
	e, _ := NewSnapshotEstimator(4, terms, CovarianceOptions{AllPairs: true})
	out := make([]byte, 4)
	for _, B := range bases {
		for range perBasis {
			st.sample(rng, B, out)
			e.Add(B, string(out), 1)
		}
	}
	est, err := e.Result()
	if err != nil {
		t.Fatal(err)
	}
	// Each estimated shot-level covariance ĉ_ab = Cov·N_a N_b/N_ab is a
	// sample covariance over N_ab shots; its standard error is
	// sqrt(E[(x_a-e_a)²(x_b-e_b)²]/N_ab) (closed form above; common
	// practice). Means are checked against e_a with sd sqrt((1-e²)/N).
	// Tolerance 5 sd.
	checked := 0
	for a := range terms {
		ea, _, _, _ := st.exactCov(terms[a], terms[a])
		na := float64(est.Shots[a])
		if d := math.Abs(est.Values[a] - ea); d > 5*math.Sqrt((1-ea*ea)/na) {
			t.Errorf("%s: estimate %v, exact %v", terms[a].Key(), est.Values[a], ea)
		}
		for b := a; b < len(terms); b++ {
			var nab float64
			for _, B := range bases {
				if Serves(B, terms[a]) && Serves(B, terms[b]) {
					nab += perBasis
				}
			}
			if nab == 0 {
				continue
			}
			nb := float64(est.Shots[b])
			_, _, c, fourth := st.exactCov(terms[a], terms[b])
			if a == b {
				c, fourth = 1-ea*ea, 1 // variance of x_a; the diagonal is Var(m_a)
			}
			chat := est.Cov.At(a, b) * na * nb / nab
			if math.Abs(chat-c) > 5*math.Sqrt(fourth/nab) {
				t.Errorf("c(%s, %s): estimated %v, exact %v (sd %v)", terms[a].Key(), terms[b].Key(), chat, c, math.Sqrt(fourth/nab))
			}
			checked++
		}
	}
	t.Logf("%d bases, %d covariance entries checked", len(bases), checked)
}

func TestSnapshotCovarianceReplicates(t *testing.T) {
	if testing.Short() {
		t.Skip("replicate experiment")
	}
	// The covariance of the means over many independent experiments must
	// match N_ab c_ab/(N_a N_b) computed from the exact state; this checks
	// the formula itself where shot sets differ (N_a != N_b != N_ab).
	st := testState()
	terms := statTerms(t)
	// A design in which terms are served by different basis sets.
	bases := []string{"ZZZZ", "ZZZZ", "ZXZX", "XZXZ", "XXXX", "ZZXX", "YZZY"}
	const perBasis, reps = 150, 600
	var pick []int // terms served by at least 2 bases, and a few others
	for k, term := range terms {
		if ShotsPerTerm(bases, 1, []lattice.Term{term})[0] >= 1 {
			pick = append(pick, k)
		}
	}
	rng := rand.New(rand.NewPCG(99, 3))
	out := make([]byte, 4)
	means := make([][]float64, reps)
	avgCov := make([][]float64, len(pick))
	for i := range avgCov {
		avgCov[i] = make([]float64, len(pick))
	}
	sub := make([]lattice.Term, len(pick))
	for i, k := range pick {
		sub[i] = terms[k]
	}
	for r := range reps {
		e, _ := NewSnapshotEstimator(4, sub, CovarianceOptions{AllPairs: true})
		for _, B := range bases {
			for range perBasis {
				st.sample(rng, B, out)
				e.Add(B, string(out), 1)
			}
		}
		est, err := e.Result()
		if err != nil {
			t.Fatal(err)
		}
		means[r] = est.Values
		for i := range pick {
			for j := range pick {
				avgCov[i][j] += est.Cov.At(i, j) / reps
			}
		}
	}
	for i := range pick {
		for j := i; j < len(pick); j++ {
			var mi, mj float64
			for r := range reps {
				mi += means[r][i]
				mj += means[r][j]
			}
			mi, mj = mi/reps, mj/reps
			var emp float64
			for r := range reps {
				emp += (means[r][i] - mi) * (means[r][j] - mj)
			}
			emp /= reps - 1
			exact := exactMeanCov(st, sub, bases, perBasis, i, j)
			vi := exactMeanCov(st, sub, bases, perBasis, i, i)
			vj := exactMeanCov(st, sub, bases, perBasis, j, j)
			// Standard error of a sample covariance of R roughly normal
			// pairs: sqrt((σ_i² σ_j² + σ_ij²)/R) (normal theory, common
			// practice); 5 of them.
			tol := 5 * math.Sqrt((vi*vj+exact*exact)/reps)
			if math.Abs(emp-exact) > tol {
				t.Errorf("Cov(m[%s], m[%s]): over replicates %v, formula %v (tol %v)", sub[i].Key(), sub[j].Key(), emp, exact, tol)
			}
			// The estimator's own covariance, averaged, is unbiased for
			// the formula up to its O(1/N) bias; its spread over R runs is
			// far below tol.
			if math.Abs(avgCov[i][j]-exact) > tol {
				t.Errorf("Cov(m[%s], m[%s]): estimator average %v, formula %v (tol %v)", sub[i].Key(), sub[j].Key(), avgCov[i][j], exact, tol)
			}
		}
	}
}
