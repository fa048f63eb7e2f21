package validate

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"slices"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
	"warmfit/lattice"
)

// FreeFermionChain is the exact Gibbs state of a qubit Hamiltonian that
// the Jordan–Wigner transformation along the qubit order 0, 1, ..., n-1
// maps to free Majorana fermions (Lieb, Schultz, Mattis, Ann. Phys. 16, 407
// (1961); Pfeuty, Ann. Phys. 57, 79 (1970)). With
//
//	gamma_{2q} = Z_0...Z_{q-1} X_q,  gamma_{2q+1} = Z_0...Z_{q-1} Y_q,
//
// every term must be a Majorana bilinear i gamma_a gamma_b, for example
// Z_q = -i gamma_{2q} gamma_{2q+1}, X_q X_{q+1} = -i gamma_{2q+1} gamma_{2q+2},
// Y_q Y_{q+1} = i gamma_{2q} gamma_{2q+3}, or X_i Z...Z X_j at any range;
// this covers XY and transverse-field Ising chains with arbitrary site-
// dependent couplings. H = (i/4) sum_ab M_ab gamma_a gamma_b with M real
// antisymmetric, whose singular values are the mode energies eps_k (each
// twice), and H = sum_k eps_k (b_k^dagger b_k - 1/2) with no constant (H is
// traceless), so
//
//	ln Z = sum_k ln[2 cosh(beta eps_k / 2)],  E = -sum_k (eps_k/2) tanh(beta eps_k/2).
//
// Expectations of any Pauli string follow from Wick's theorem as Pfaffians
// of the covariance <i gamma_a gamma_b> = -[tan(beta M/2)]_ab.
//
// A term that is a bilinear only times the parity P = Z_0 Z_1...Z_{n-1}
// (the wrap-around bond of a ring, X_{n-1} X_0 = i P gamma_{2n-1} gamma_0)
// is handled in the two parity sectors with the projectors (1 +- P)/2:
//
//	Z = 1/2 [Z_+ + tr(P e^{-beta H_+}) + Z_- - tr(P e^{-beta H_-})],
//	tr(P e^{-beta H_s}) = sign Pf(M_s) prod_k 2 sinh(beta eps_k^s / 2),
//
// where H_s is the quadratic Hamiltonian equal to H on the sector P = s.
// Then LogZ, Energy, Entropy and HeatCapacity are exact, Expect is not
// available.
//
// The letters may first be permuted by one global Clifford frame (X<->Z,
// for instance, so that -J ZZ - h X becomes -J XX - h Z); NewFreeFermionChain
// finds the frame itself.
type FreeFermionChain struct {
	n     int
	beta  float64
	frame letterFrame

	logZ, energy, heatCap float64

	// Open case (no parity-dependent term).
	modes []float64  // eps_k >= 0, descending
	cov   *mat.Dense // G_ab = <i gamma_a gamma_b>, a != b
	// sectors reports that the parity projection was needed.
	sectors bool
}

// NewFreeFermionChain solves H = sum_k terms[k].Coeff P_k on n qubits. It
// returns an error when no letter frame makes every term a Majorana
// bilinear (possibly times the parity).
func NewFreeFermionChain(n int, terms []lattice.Term, beta float64) (*FreeFermionChain, error) {
	if n < 1 || n > cluster.MaxQubits {
		return nil, fmt.Errorf("validate: free-fermion chain of %d qubits outside 1..%d", n, cluster.MaxQubits)
	}
	if err := finiteArgs(beta); err != nil {
		return nil, err
	}
	h, err := cluster.NewHamiltonian(n, terms)
	if err != nil {
		return nil, fmt.Errorf("validate: %w", err)
	}
	ops := h.Ops
	var firstErr error
	for _, fr := range letterFrames {
		sys, err := buildMajorana(n, ops, terms, fr)
		if err != nil {
			if firstErr == nil {
				firstErr = err
			}
			continue
		}
		f := &FreeFermionChain{n: n, beta: beta, frame: fr}
		if err := f.solve(sys); err != nil {
			return nil, err
		}
		return f, nil
	}
	return nil, fmt.Errorf("validate: not a free-fermion chain in any letter frame (identity frame: %w)", firstErr)
}

// majoranaSystem holds the coupling matrices: m[0] for the open case or the
// sector P = +1, m[1] for P = -1 (nil when no term depends on parity).
type majoranaSystem struct {
	m [2]*mat.Dense
}

func buildMajorana(n int, ops []cluster.PauliString, terms []lattice.Term, fr letterFrame) (*majoranaSystem, error) {
	dim := 2 * n
	sys := &majoranaSystem{}
	sys.m[0] = mat.NewDense(dim, dim, nil)
	parity := parityWord(n)
	for k, p0 := range ops {
		c := terms[k].Coeff
		if c == 0 {
			// A template may list interacting terms switched off.
			continue
		}
		p, sign := fr.apply(p0)
		c *= sign
		w := pauliWord(p)
		sector := false
		if w.len() != 2 {
			w = parity.mul(w)
			if w.len() != 2 {
				return nil, fmt.Errorf("term %d (%s) is not a Majorana bilinear", k, terms[k].Key())
			}
			sector = true
		}
		if w.phase%2 == 0 {
			// Cannot happen for a Hermitian Pauli string.
			return nil, fmt.Errorf("term %d (%s) maps to a non-Hermitian bilinear", k, terms[k].Key())
		}
		a, b := w.indices()
		// c i^phase gamma_a gamma_b = i t gamma_a gamma_b with t real, and
		// i t gamma_a gamma_b = (i/4)(M_ab gamma_a gamma_b + M_ba gamma_b gamma_a)
		// for M_ab = 2t.
		t := c
		if w.phase == 3 {
			t = -c
		}
		if sector && sys.m[1] == nil {
			// The terms so far hold in both sectors.
			sys.m[1] = mat.DenseCopyOf(sys.m[0])
		}
		for s := 0; s < 2; s++ {
			m := sys.m[s]
			if m == nil {
				continue
			}
			ts := t
			if sector && s == 1 {
				ts = -t // the parity is -1 in sector 1
			}
			m.Set(a, b, m.At(a, b)+2*ts)
			m.Set(b, a, m.At(b, a)-2*ts)
		}
	}
	return sys, nil
}

// solve diagonalises the coupling matrices.
func (f *FreeFermionChain) solve(sys *majoranaSystem) error {
	if sys.m[1] == nil {
		eps, u, v, err := singular(sys.m[0])
		if err != nil {
			return err
		}
		f.modes = pairModes(eps)
		var lz, e, c float64
		for _, x := range f.modes {
			lz += logTwoCosh(f.beta * x / 2)
			t := math.Tanh(f.beta * x / 2)
			e -= x / 2 * t
			c += (x / 2) * (x / 2) * (1 - t*t)
		}
		f.logZ, f.energy, f.heatCap = lz, e, f.beta*f.beta*c
		// G = -U tanh(beta Sigma/2) V^T.
		dim := len(eps)
		scaled := mat.DenseCopyOf(u)
		for j := 0; j < dim; j++ {
			t := -math.Tanh(f.beta * eps[j] / 2)
			for i := 0; i < dim; i++ {
				scaled.Set(i, j, scaled.At(i, j)*t)
			}
		}
		f.cov = mat.NewDense(dim, dim, nil)
		f.cov.Mul(scaled, v.T())
		return nil
	}
	f.sectors = true
	var parts []sectorTerm
	for s := 0; s < 2; s++ {
		eps, _, _, err := singular(sys.m[s])
		if err != nil {
			return err
		}
		modes := pairModes(eps)
		var cosh, sinh sectorTerm
		cosh.weight = 0.5
		sinh.weight = 0.5
		if s == 1 {
			sinh.weight = -0.5
		}
		pfSign, _ := pfaffian(sys.m[s])
		sinh.weight *= pfSign
		zero := pfSign == 0
		for _, x := range modes {
			y := f.beta * x / 2
			t := math.Tanh(y)
			cosh.l += logTwoCosh(y)
			cosh.d1 += x / 2 * t
			cosh.d2 += (x / 2) * (x / 2) * (1 - t*t)
			if y == 0 {
				zero = true
				continue
			}
			if y < 0 {
				sinh.weight = -sinh.weight
			}
			ay := math.Abs(y)
			// ln |2 sinh y| = |y| + ln(1 - e^{-2|y|})
			sinh.l += ay + math.Log(-math.Expm1(-2*ay))
			sinh.d1 += x / 2 / t
			sh := math.Sinh(y)
			sinh.d2 -= (x / 2) * (x / 2) / (sh * sh)
		}
		parts = append(parts, cosh)
		if !zero {
			parts = append(parts, sinh)
		}
	}
	return f.combine(parts)
}

// sectorTerm is one trace weight * exp(l) of the parity projection with the
// first two beta-derivatives of l.
type sectorTerm struct {
	weight, l, d1, d2 float64
}

func (f *FreeFermionChain) combine(parts []sectorTerm) error {
	lmax := math.Inf(-1)
	for _, p := range parts {
		lmax = max(lmax, p.l)
	}
	var z, z1, z2 float64
	for _, p := range parts {
		w := p.weight * math.Exp(p.l-lmax)
		z += w
		z1 += w * p.d1
		z2 += w * (p.d2 + p.d1*p.d1)
	}
	if !(z > 0) {
		return fmt.Errorf("validate: parity-projected partition function is %v (cancellation)", z)
	}
	f.logZ = lmax + math.Log(z)
	f.energy = -z1 / z
	f.heatCap = f.beta * f.beta * (z2/z - (z1/z)*(z1/z))
	return nil
}

// singular returns the singular values (descending) and vectors of m.
func singular(m *mat.Dense) (s []float64, u, v *mat.Dense, err error) {
	var svd mat.SVD
	if !svd.Factorize(m, mat.SVDFull) {
		return nil, nil, nil, errors.New("validate: SVD of the Majorana coupling matrix failed")
	}
	s = svd.Values(nil)
	u, v = new(mat.Dense), new(mat.Dense)
	svd.UTo(u)
	svd.VTo(v)
	return s, u, v, nil
}

// pairModes returns one of each pair of singular values of an
// antisymmetric matrix (they come in equal pairs), averaging each pair.
func pairModes(s []float64) []float64 {
	out := make([]float64, len(s)/2)
	for k := range out {
		out[k] = (s[2*k] + s[2*k+1]) / 2
	}
	return out
}

func logTwoCosh(x float64) float64 {
	ax := math.Abs(x)
	return ax + math.Log1p(math.Exp(-2*ax))
}

// NumQubits returns n.
func (f *FreeFermionChain) NumQubits() int { return f.n }

// LogZ returns ln tr exp(-beta H).
func (f *FreeFermionChain) LogZ() float64 { return f.logZ }

// Energy returns <H>.
func (f *FreeFermionChain) Energy() float64 { return f.energy }

// Entropy returns S = ln Z + beta <H>.
func (f *FreeFermionChain) Entropy() float64 { return f.logZ + f.beta*f.energy }

// HeatCapacity returns beta^2 (<H^2> - <H>^2).
func (f *FreeFermionChain) HeatCapacity() float64 { return f.heatCap }

// ModeEnergies returns the single-particle energies eps_k >= 0 in
// descending order, or nil when the parity projection was needed (each
// sector then has its own set).
func (f *FreeFermionChain) ModeEnergies() []float64 {
	return slices.Clone(f.modes)
}

// Expect returns <P> for any Pauli string P on the n qubits, by Wick's
// theorem: P = i^phase gamma_{a_1}...gamma_{a_2m} and
// <gamma_{a_1}...gamma_{a_2m}> = Pf[<gamma_{a_i} gamma_{a_j}>]. Strings odd
// in the Majoranas (odd under parity) have zero expectation. It is not
// available when the parity projection was needed.
func (f *FreeFermionChain) Expect(p cluster.PauliString) (float64, error) {
	if f.sectors {
		return 0, errors.New("validate: expectations are not available for a parity-projected (periodic) free-fermion chain")
	}
	if (p.X|p.Z)>>uint(f.n) != 0 {
		return 0, fmt.Errorf("validate: observable acts outside qubits 0..%d", f.n-1)
	}
	q, sign := f.frame.apply(p)
	w := pauliWord(q)
	l := w.len()
	if l%2 == 1 {
		return 0, nil
	}
	idx := w.list()
	m := l / 2
	pf := 1.0
	if l > 0 {
		sub := mat.NewDense(l, l, nil)
		for i := 0; i < l; i++ {
			for j := 0; j < l; j++ {
				if i != j {
					sub.Set(i, j, f.cov.At(idx[i], idx[j]))
				}
			}
		}
		s, logAbs := pfaffian(sub)
		pf = s * math.Exp(logAbs)
	}
	// <gamma...gamma> = Pf(-i G_sub) = (-i)^m Pf(G_sub); times i^phase.
	ph := (w.phase + 3*m) & 3
	switch ph {
	case 0:
		return sign * pf, nil
	case 2:
		return -sign * pf, nil
	}
	if pf == 0 {
		return 0, nil
	}
	return 0, fmt.Errorf("validate: Wick expectation came out imaginary (phase i^%d)", ph)
}

// majoranaWord is i^phase times the ordered product of the Majoranas whose
// bits are set in mask (bit a of the 128-bit mask is gamma_a).
type majoranaWord struct {
	mask  [2]uint64
	phase int
}

func (w majoranaWord) len() int {
	return bits.OnesCount64(w.mask[0]) + bits.OnesCount64(w.mask[1])
}

func (w majoranaWord) list() []int {
	var out []int
	for h := 0; h < 2; h++ {
		for m := w.mask[h]; m != 0; m &= m - 1 {
			out = append(out, 64*h+bits.TrailingZeros64(m))
		}
	}
	return out
}

func (w majoranaWord) indices() (a, b int) {
	l := w.list()
	return l[0], l[1]
}

// countAbove returns the number of Majoranas in w with index above a.
func (w majoranaWord) countAbove(a int) int {
	if a < 64 {
		return bits.OnesCount64(w.mask[0]&^(uint64(1)<<uint(a+1)-1)) + bits.OnesCount64(w.mask[1])
	}
	return bits.OnesCount64(w.mask[1] &^ (uint64(1)<<uint(a-63) - 1))
}

// mul returns w times v: moving each Majorana of v (ascending) left past
// the larger ones of w costs a sign each, and equal ones square to 1.
func (w majoranaWord) mul(v majoranaWord) majoranaWord {
	swaps := 0
	for _, b := range v.list() {
		swaps += w.countAbove(b)
	}
	return majoranaWord{
		mask:  [2]uint64{w.mask[0] ^ v.mask[0], w.mask[1] ^ v.mask[1]},
		phase: (w.phase + v.phase + 2*swaps) & 3,
	}
}

// majoranaRange is gamma_lo gamma_{lo+1} ... gamma_{hi-1}.
func majoranaRange(lo, hi int) majoranaWord {
	var w majoranaWord
	for a := lo; a < hi; a++ {
		w.mask[a/64] |= 1 << uint(a%64)
	}
	return w
}

// pauliWord writes a Pauli string in Majoranas: X_q = S_q gamma_{2q},
// Y_q = S_q gamma_{2q+1}, Z_q = -i gamma_{2q} gamma_{2q+1}, with the string
// S_q = Z_0...Z_{q-1} = (-i)^q gamma_0 gamma_1 ... gamma_{2q-1}.
func pauliWord(p cluster.PauliString) majoranaWord {
	var w majoranaWord
	for s := p.X | p.Z; s != 0; s &= s - 1 {
		q := bits.TrailingZeros64(s)
		bit := uint64(1) << uint(q)
		var f majoranaWord
		switch {
		case p.X&bit != 0 && p.Z&bit != 0: // Y
			f = majoranaRange(0, 2*q).mul(majoranaRange(2*q+1, 2*q+2))
			f.phase = (f.phase + 3*q) & 3
		case p.X&bit != 0: // X
			f = majoranaRange(0, 2*q+1)
			f.phase = (3 * q) & 3
		default: // Z
			f = majoranaRange(2*q, 2*q+2)
			f.phase = 3
		}
		w = w.mul(f)
	}
	return w
}

// parityWord is P = Z_0 Z_1 ... Z_{n-1} = (-i)^n gamma_0 ... gamma_{2n-1}.
func parityWord(n int) majoranaWord {
	w := majoranaRange(0, 2*n)
	w.phase = (3 * n) & 3
	return w
}

// letterFrame is a global Clifford relabelling of Pauli letters: letter
// l becomes to[l] and picks up a factor -1 when l == flip (index 0, 1, 2 for
// X, Y, Z; flip = -1 for none). Each frame preserves XY = iZ.
type letterFrame struct {
	to   [3]int
	flip int
}

var letterFrames = []letterFrame{
	{to: [3]int{0, 1, 2}, flip: -1}, // identity
	{to: [3]int{2, 1, 0}, flip: 1},  // X<->Z, Y -> -Y (Hadamard)
	{to: [3]int{1, 0, 2}, flip: 2},  // X<->Y, Z -> -Z
	{to: [3]int{0, 2, 1}, flip: 0},  // Y<->Z, X -> -X
	{to: [3]int{1, 2, 0}, flip: -1}, // X->Y->Z->X
	{to: [3]int{2, 0, 1}, flip: -1}, // X->Z->Y->X
}

// apply returns the relabelled string and its sign.
func (fr letterFrame) apply(p cluster.PauliString) (cluster.PauliString, float64) {
	var out cluster.PauliString
	sign := 1.0
	for s := p.X | p.Z; s != 0; s &= s - 1 {
		bit := s & -s
		l := 2 // Z
		switch {
		case p.X&bit != 0 && p.Z&bit != 0:
			l = 1
		case p.X&bit != 0:
			l = 0
		}
		if l == fr.flip {
			sign = -sign
		}
		switch fr.to[l] {
		case 0:
			out.X |= bit
		case 1:
			out.X |= bit
			out.Z |= bit
		case 2:
			out.Z |= bit
		}
	}
	return out, sign
}

// pfaffian returns the sign and log|Pf| of a real antisymmetric matrix
// of even order by Parlett–Reid elimination with pivoting (Wimmer, ACM
// TOMS 38, 30 (2012)); sign 0 when Pf = 0. Odd order gives 0. The matrix
// is not modified.
func pfaffian(m *mat.Dense) (sign, logAbs float64) {
	n, _ := m.Dims()
	if n%2 == 1 {
		return 0, math.Inf(-1)
	}
	a := mat.DenseCopyOf(m)
	sign = 1
	for k := 0; k < n-1; k += 2 {
		// Pivot: the largest entry of column k below the diagonal.
		kp := k + 1
		for i := k + 2; i < n; i++ {
			if math.Abs(a.At(i, k)) > math.Abs(a.At(kp, k)) {
				kp = i
			}
		}
		if kp != k+1 {
			swapRowsCols(a, k+1, kp)
			sign = -sign
		}
		piv := a.At(k, k+1)
		if piv == 0 {
			return 0, math.Inf(-1)
		}
		if piv < 0 {
			sign = -sign
		}
		logAbs += math.Log(math.Abs(piv))
		// Eliminate row/column k beyond k+1 with row/column k+1:
		// A[i][j] += tau_i A[j][k+1] - A[i][k+1] tau_j, tau = A[k][k+2:]/piv.
		for i := k + 2; i < n; i++ {
			ti := a.At(k, i) / piv
			for j := k + 2; j < n; j++ {
				tj := a.At(k, j) / piv
				a.Set(i, j, a.At(i, j)+ti*a.At(j, k+1)-a.At(i, k+1)*tj)
			}
		}
	}
	return sign, logAbs
}

func swapRowsCols(a *mat.Dense, i, j int) {
	n, _ := a.Dims()
	for c := 0; c < n; c++ {
		x, y := a.At(i, c), a.At(j, c)
		a.Set(i, c, y)
		a.Set(j, c, x)
	}
	for r := 0; r < n; r++ {
		x, y := a.At(r, i), a.At(r, j)
		a.Set(r, i, y)
		a.Set(r, j, x)
	}
}

// TFIMChainTerms returns the terms of the transverse-field Ising chain
// H = -j sum Z_i Z_{i+1} - h sum X_i on n sites, open or periodic (a ring
// needs n >= 3, otherwise its wrap bond doubles a bond).
func TFIMChainTerms(n int, j, h float64, periodic bool) ([]lattice.Term, error) {
	bonds, err := chainBonds(n, periodic)
	if err != nil {
		return nil, err
	}
	var out []lattice.Term
	for _, b := range bonds {
		t, err := lattice.NewTerm("ZZ", b[:], -j)
		if err != nil {
			return nil, err
		}
		out = append(out, t)
	}
	for i := 0; i < n; i++ {
		out = append(out, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: -h})
	}
	return out, nil
}

// XXChainTerms returns the terms of the XX chain
// H = -(j/2) sum (X_i X_{i+1} + Y_i Y_{i+1}) on n sites, open or periodic.
func XXChainTerms(n int, j float64, periodic bool) ([]lattice.Term, error) {
	bonds, err := chainBonds(n, periodic)
	if err != nil {
		return nil, err
	}
	var out []lattice.Term
	for _, b := range bonds {
		for _, l := range []string{"XX", "YY"} {
			t, err := lattice.NewTerm(l, b[:], -j/2)
			if err != nil {
				return nil, err
			}
			out = append(out, t)
		}
	}
	return out, nil
}

func chainBonds(n int, periodic bool) ([][2]int, error) {
	if n < 1 || (periodic && n < 3) {
		return nil, fmt.Errorf("validate: chain of %d sites (periodic %v): need n >= 1, and n >= 3 for a ring", n, periodic)
	}
	var out [][2]int
	for i := 0; i+1 < n; i++ {
		out = append(out, [2]int{i, i + 1})
	}
	if periodic {
		out = append(out, [2]int{n - 1, 0})
	}
	return out, nil
}
