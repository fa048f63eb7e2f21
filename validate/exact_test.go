package validate

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
	"warmfit/lattice"
)

func mustTerm(pauli string, coeff float64, sites ...int) lattice.Term {
	t, err := lattice.NewTerm(pauli, sites, coeff)
	if err != nil {
		panic(err)
	}
	return t
}

// tfimChain returns H = -j sum Z_i Z_{i+1} - h sum X_i on an open chain.
func tfimChain(n int, j, h float64) []lattice.Term {
	var terms []lattice.Term
	for i := 0; i+1 < n; i++ {
		terms = append(terms, mustTerm("ZZ", -j, i, i+1))
	}
	for i := 0; i < n; i++ {
		terms = append(terms, mustTerm("X", -h, i))
	}
	return terms
}

// tfimOpenLogZ is the free-fermion log Z of the open transverse-field
// Ising chain: by the Jordan–Wigner mapping (Lieb, Schultz, Mattis 1961;
// Pfeuty 1970) the Majorana coupling matrix is bidiagonal with h on the
// diagonal and j on the superdiagonal, its singular values s_k give the
// mode energies 2 s_k, and log Z = sum_k log(2 cosh(beta s_k)).
func tfimOpenLogZ(n int, j, h, beta float64) float64 {
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.Set(i, i, h)
		if i+1 < n {
			m.Set(i, i+1, j)
		}
	}
	var svd mat.SVD
	if !svd.Factorize(m, mat.SVDNone) {
		panic("svd failed")
	}
	var logZ float64
	for _, s := range svd.Values(nil) {
		x := beta * s
		logZ += x + math.Log1p(math.Exp(-2*x))
	}
	return logZ
}

// TestExactTFIMFreeFermions compares dense ED of open transverse-field
// Ising chains with the free-fermion solution, including <X_i> from
// d log Z/d h_i summed: sum_i <X_i> = (1/beta) d log Z / d h.
func TestExactTFIMFreeFermions(t *testing.T) {
	for _, tc := range []struct {
		n          int
		j, h, beta float64
	}{{2, 1, 1, 0.5}, {5, 1, 0.5, 1}, {7, 0.8, 1.3, 2}, {8, 1, 1, 0.5}} {
		th, err := ExactThermal(tc.n, tfimChain(tc.n, tc.j, tc.h), tc.beta)
		if err != nil {
			t.Fatal(err)
		}
		want := tfimOpenLogZ(tc.n, tc.j, tc.h, tc.beta)
		if math.Abs(th.LogZ()-want) > 1e-12*want {
			t.Errorf("n=%d J=%v h=%v beta=%v: log Z %.15g, free fermions %.15g", tc.n, tc.j, tc.h, tc.beta, th.LogZ(), want)
		}
		const dh = 1e-5
		dlogZ := (tfimOpenLogZ(tc.n, tc.j, tc.h+dh, tc.beta) - tfimOpenLogZ(tc.n, tc.j, tc.h-dh, tc.beta)) / (2 * dh)
		var sumX float64
		for i := 0; i < tc.n; i++ {
			p, _ := cluster.ParsePauli("X", []int{i})
			sumX += th.Expect(p)
		}
		if math.Abs(sumX-dlogZ/tc.beta) > 1e-7 {
			t.Errorf("n=%d: sum <X_i> = %.10g, (1/beta) dlogZ/dh = %.10g", tc.n, sumX, dlogZ/tc.beta)
		}
	}
}

// TestExactXXFreeFermions: H = -(j/2) sum (X_i X_{i+1} + Y_i Y_{i+1}) on
// an open chain is free hopping after Jordan–Wigner (Lieb, Schultz,
// Mattis 1961) with single-particle energies -2j cos(pi k/(n+1)),
// k = 1..n, so log Z = sum_k log(1 + exp(2 beta j cos(pi k/(n+1)))).
func TestExactXXFreeFermions(t *testing.T) {
	for _, tc := range []struct {
		n       int
		j, beta float64
	}{{2, 1, 0.7}, {6, 1, 1}, {9, -0.6, 2}} {
		var terms []lattice.Term
		for i := 0; i+1 < tc.n; i++ {
			terms = append(terms, mustTerm("XX", -tc.j/2, i, i+1), mustTerm("YY", -tc.j/2, i, i+1))
		}
		th, err := ExactThermal(tc.n, terms, tc.beta)
		if err != nil {
			t.Fatal(err)
		}
		var want float64
		for k := 1; k <= tc.n; k++ {
			eps := -2 * tc.j * math.Cos(math.Pi*float64(k)/float64(tc.n+1))
			want += math.Log1p(math.Exp(-tc.beta * eps))
		}
		if math.Abs(th.LogZ()-want) > 1e-12*want {
			t.Errorf("n=%d j=%v beta=%v: log Z %.15g, free fermions %.15g", tc.n, tc.j, tc.beta, th.LogZ(), want)
		}
	}
}

// TestExactTelescopingChain: in 1-D the per-site log Z of the infinite
// chain is log Z(open L) - log Z(open L-1) up to a boundary error that
// decays with L; references.md (computed) gives 0.91740898065185 for the
// transverse-field Ising chain at beta = 0.5, J = h = 1, reached within
// 2e-12 by L = 7. The infinite-chain value is recomputed here from
// Pfeuty's formula ln Z/N = (1/pi) int_0^pi ln[2 cosh(beta eps_k/2)] dk,
// eps_k = 2 sqrt(J^2 + h^2 - 2 J h cos k), by the trapezoid rule
// (exponentially accurate for this smooth periodic integrand).
func TestExactTelescopingChain(t *testing.T) {
	const beta, j, h = 0.5, 1.0, 1.0
	const m = 4000
	var integral float64
	for i := 0; i <= m; i++ {
		k := math.Pi * float64(i) / m
		eps := 2 * math.Sqrt(j*j+h*h-2*j*h*math.Cos(k))
		f := math.Log(2 * math.Cosh(beta*eps/2))
		if i == 0 || i == m {
			f /= 2
		}
		integral += f
	}
	integral /= m
	if math.Abs(integral-0.91740898065185) > 1e-13 {
		t.Fatalf("Pfeuty integral %.15g, references.md 0.91740898065185", integral)
	}
	logZ := func(n int) float64 {
		th, err := ExactThermal(n, tfimChain(n, j, h), beta)
		if err != nil {
			t.Fatal(err)
		}
		return th.LogZ()
	}
	if got := logZ(7) - logZ(6); math.Abs(got-integral) > 2e-12 {
		t.Errorf("log Z(7) - log Z(6) = %.15g, infinite chain %.15g", got, integral)
	}
}

// TestExactTenQubits runs a 10-qubit Y-containing chain through the
// Hermitian path and checks the trace identity tr(rho) = 1 via the
// identity expectation and S = beta E + log Z. Skipped with -short.
func TestExactTenQubits(t *testing.T) {
	if testing.Short() {
		t.Skip("10-qubit dense diagonalisation takes seconds")
	}
	const n = 10
	var terms []lattice.Term
	for i := 0; i+1 < n; i++ {
		terms = append(terms, mustTerm("XY", 0.3+0.05*float64(i), i, i+1), mustTerm("YX", -0.4, i, i+1), mustTerm("ZZ", 1, i, i+1))
	}
	for i := 0; i < n; i++ {
		terms = append(terms, mustTerm("Y", 0.2, i))
	}
	th, err := ExactThermal(n, terms, 0.8)
	if err != nil {
		t.Fatal(err)
	}
	if th.Spectrum().IsReal() {
		t.Fatal("real path taken for a Y-field Hamiltonian")
	}
	if got := th.Expect(cluster.PauliString{}); math.Abs(got-1) > 1e-12 {
		t.Errorf("tr rho = %v", got)
	}
	if s := th.Entropy(); math.Abs(s-(0.8*th.Energy()+th.LogZ())) > 1e-10 {
		t.Errorf("S = %v, beta E + log Z = %v", s, 0.8*th.Energy()+th.LogZ())
	}
	var e float64
	for _, tm := range terms {
		p, _ := cluster.ParsePauli(tm.Pauli, tm.Sites)
		e += tm.Coeff * th.Expect(p)
	}
	if math.Abs(e-th.Energy()) > 1e-10 {
		t.Errorf("sum c_k <P_k> = %v, <H> = %v", e, th.Energy())
	}
}

func TestExactThermalErrors(t *testing.T) {
	for _, tc := range []struct {
		name  string
		n     int
		terms []lattice.Term
		beta  float64
		err   string
	}{
		{"too many qubits", 13, nil, 1, "Typical"},
		{"zero qubits", 0, nil, 1, "at least one"},
		{"site outside", 2, []lattice.Term{mustTerm("ZZ", 1, 1, 2)}, 1, "site 2 is out of range: the system has 2 sites"},
		{"bad coefficient", 2, []lattice.Term{mustTerm("X", math.NaN(), 0)}, 1, "not finite"},
		{"bad letter", 2, []lattice.Term{{Pauli: "Q", Sites: []int{0}, Coeff: 1}}, 1, "Q"},
		{"negative beta", 2, []lattice.Term{mustTerm("X", 1, 0)}, -1, "non-negative"},
	} {
		_, err := ExactThermal(tc.n, tc.terms, tc.beta)
		if err == nil || !strings.Contains(err.Error(), tc.err) {
			t.Errorf("%s: error %v, want one containing %q", tc.name, err, tc.err)
		}
	}
	_, err := ExactThermal(13, nil, 1)
	if !strings.Contains(err.Error(), "12") {
		t.Errorf("limit not named: %v", err)
	}
}
