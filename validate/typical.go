package validate

import (
	"errors"
	"fmt"
	"math"

	"warmfit/cluster"
	"warmfit/lattice"
)

// MaxTypicalityQubits is the largest system Typical accepts.
const MaxTypicalityQubits = 26

// DefaultTypicalityMemory is the memory budget (bytes) for the state
// vectors of Typical when the options give none.
const DefaultTypicalityMemory = 8 << 30

// TypicalityOptions tunes Typical. The zero value is usable.
type TypicalityOptions struct {
	// Vectors is the number R >= 2 of random vectors; 0 means 16. The
	// statistical error falls as 1/sqrt(R).
	Vectors int
	// Seed selects the random vectors; equal seeds give identical results.
	Seed uint64
	// Tolerance bounds the relative 2-norm error of each thermal vector
	// exp(-beta H/2)|r> from truncating its Chebyshev series; 0 means 1e-10.
	Tolerance float64
	// Workers is the number of goroutines; <= 0 means GOMAXPROCS. Results
	// do not depend on it.
	Workers int
	// MaxMemory is the budget in bytes for vectors; 0 means
	// DefaultTypicalityMemory.
	MaxMemory int64
}

// Estimate is a statistical estimate with its standard error.
type Estimate struct {
	Value, Stderr float64
}

// TypicalResult holds the thermal-typicality estimates of one Gibbs state.
// Every Stderr is a jackknife standard error over the random vectors.
type TypicalResult struct {
	NumQubits int
	Beta      float64
	Vectors   int

	LogZ          Estimate   // ln tr exp(-beta H)
	Expect        []Estimate // <P> for each requested observable, in order
	Energy        Estimate   // <H>
	EnergyPerSite Estimate   // <H> / n
	Entropy       Estimate   // S = ln Z + beta <H>
	HeatCapacity  Estimate   // C = beta^2 (<H^2> - <H>^2)

	// SpectrumLow and SpectrumHigh bound the spectrum of H as used by the
	// Chebyshev expansion; ChebyshevTerms is the largest number of terms
	// any vector needed; LanczosSteps were spent on the bounds.
	SpectrumLow, SpectrumHigh float64
	ChebyshevTerms            int
	LanczosSteps              int
}

// Typical estimates ln Z and the expectations of observables in the Gibbs
// state exp(-beta H)/Z of H = sum_k terms[k].Coeff P_k on n qubits, by
// thermal typicality, each with a standard error. See TypicalThermal.
func Typical(n int, terms []lattice.Term, beta float64, observables []cluster.PauliString, opt TypicalityOptions) (logZ Estimate, expect []Estimate, err error) {
	res, err := TypicalThermal(n, terms, beta, observables, opt)
	if err != nil {
		return Estimate{}, nil, err
	}
	return res.LogZ, res.Expect, nil
}

// TypicalThermal computes thermal expectations without ever forming a
// matrix, by thermal (quantum) typicality: for random vectors |r> with
// E[|r><r|] = 1, |phi_r> = exp(-beta H/2)|r> gives
//
//	Z = E <phi_r|phi_r>,   <A> = E <phi_r|A|phi_r> / E <phi_r|phi_r>
//
// (Hams & De Raedt, PRE 62, 4365 (2000); Sugiura & Shimizu, PRL 111,
// 010401 (2013)). With R vectors the estimates are the sample means and
// their ratio; the relative error scales as 1/sqrt(R Z_eff), Z_eff =
// Z(beta)^2/Z(2 beta), about 2^{-n/2} at high temperature. The errors are
// jackknife estimates over the vectors, which carry the correlation
// between numerator and denominator of each ratio.
//
// The thermal vectors come from a Chebyshev expansion of exp(-beta H/2)
// (chebyshev.go) on an Operator; memory is three vectors of 2^n amplitudes
// (real when H is) plus the diagonal of H. A negative beta is allowed.
// Observables must act on qubits 0..n-1; the identity is allowed.
func TypicalThermal(n int, terms []lattice.Term, beta float64, observables []cluster.PauliString, opt TypicalityOptions) (*TypicalResult, error) {
	run, err := newTypicalRun(n, terms, beta, observables, opt)
	if err != nil {
		return nil, err
	}
	return run.do()
}

// newTypicalRun checks the arguments of TypicalThermal and prepares its
// run (options with their defaults, the operator).
func newTypicalRun(n int, terms []lattice.Term, beta float64, observables []cluster.PauliString, opt TypicalityOptions) (*typicalRun, error) {
	if n < 1 || n > MaxTypicalityQubits {
		return nil, fmt.Errorf("validate: typicality for %d qubits: supported range is 1..%d (MaxTypicalityQubits)", n, MaxTypicalityQubits)
	}
	if math.IsNaN(beta) || math.IsInf(beta, 0) {
		return nil, fmt.Errorf("validate: beta %v is not finite", beta)
	}
	if opt.Vectors == 0 {
		opt.Vectors = 16
	}
	if opt.Vectors < 2 {
		return nil, fmt.Errorf("validate: typicality needs at least 2 random vectors for an error estimate, got %d", opt.Vectors)
	}
	if opt.Tolerance == 0 {
		opt.Tolerance = 1e-10
	}
	if !(opt.Tolerance > 0 && opt.Tolerance < 1) {
		return nil, fmt.Errorf("validate: Chebyshev tolerance %v outside (0, 1)", opt.Tolerance)
	}
	if opt.MaxMemory == 0 {
		opt.MaxMemory = DefaultTypicalityMemory
	}
	full := uint64(1)<<uint(n) - 1
	for i, p := range observables {
		if (p.X|p.Z)&^full != 0 {
			return nil, fmt.Errorf("validate: observable %d acts outside qubits 0..%d", i, n-1)
		}
	}
	realH := true
	for _, t := range terms {
		if p, err := cluster.TermPauli(t); err == nil && !p.IsReal() && t.Coeff != 0 {
			realH = false
		}
	}
	if need := TypicalityMemory(n, realH); need > opt.MaxMemory {
		return nil, fmt.Errorf("validate: typicality for %d qubits needs %d MiB of vectors, above the budget of %d MiB (TypicalityOptions.MaxMemory)", n, need>>20, opt.MaxMemory>>20)
	}
	op, err := NewOperator(n, terms, opt.Workers)
	if err != nil {
		return nil, err
	}
	return &typicalRun{
		o:    newVecOps(op, op.IsReal()),
		beta: beta,
		opt:  opt,
		obs:  observables,
	}, nil
}

// TypicalityMemory returns the bytes of vectors Typical allocates for n
// qubits: three state vectors (real ones when the Hamiltonian is real) and
// the diagonal of H.
func TypicalityMemory(n int, realH bool) int64 {
	amp := int64(16)
	if realH {
		amp = 8
	}
	return (3*amp + 8) << uint(n)
}

type typicalRun struct {
	o    *vecOps
	beta float64
	opt  TypicalityOptions
	obs  []cluster.PauliString
	// visit, when set, sees every thermal vector psi (squared norm npsi,
	// log weight logW as in vectorSample) before it is overwritten.
	visit func(r int, psi stateVec, npsi, logW float64)
}

// vectorSample holds what one random vector contributes: the logarithm of
// its weight <phi|phi> and the normalised quadratic forms.
type vectorSample struct {
	logW   float64
	obs    []float64 // <phi|P|phi> / <phi|phi>
	energy float64   // <phi|H|phi> / <phi|phi>
	h2     float64   // <phi|H^2|phi> / <phi|phi>
}

func (t *typicalRun) do() (*TypicalResult, error) {
	o := t.o
	op := o.op
	n := op.NumQubits()
	a, b, psi := o.newVec(), o.newVec(), o.newVec()
	res := &TypicalResult{NumQubits: n, Beta: t.beta, Vectors: t.opt.Vectors}

	tau := t.beta / 2
	var cheb *chebyshevExp
	if tau != 0 && op.Norm1() != 0 {
		lo, hi, steps, err := spectralBounds(o, a, b, t.opt.Seed)
		if err != nil {
			return nil, err
		}
		res.LanczosSteps = steps
		cheb = newChebyshevExp(tau, lo, hi)
		res.SpectrumLow, res.SpectrumHigh = lo, hi
	}

	samples := make([]vectorSample, t.opt.Vectors)
	for r := range samples {
		var logScale, npsi float64
		for {
			o.random(a, t.opt.Seed, uint64(r))
			if cheb == nil {
				npsi = o.scaleTo(psi, 1, a)
				break
			}
			terms, np, err := cheb.propagate(o, psi, a, b, t.opt.Tolerance)
			if errors.Is(err, errSpectrumEscape) && (cheb.lo != -op.Norm1() || cheb.hi != op.Norm1()) {
				// The Lanczos bounds were too tight: redo with the
				// rigorous ones (for this and all later vectors).
				cheb = newChebyshevExp(tau, -op.Norm1(), op.Norm1())
				res.SpectrumLow, res.SpectrumHigh = cheb.lo, cheb.hi
				continue
			}
			if err != nil {
				return nil, err
			}
			res.ChebyshevTerms = max(res.ChebyshevTerms, terms)
			logScale, npsi = cheb.logScale, np
			break
		}
		if !(npsi > 0) || math.IsInf(npsi, 0) {
			return nil, fmt.Errorf("validate: thermal vector %d has squared norm %v (beta %v too large for float64 range?)", r, npsi, t.beta)
		}
		s := vectorSample{logW: 2*logScale + math.Log(npsi), obs: make([]float64, len(t.obs))}
		if t.visit != nil {
			t.visit(r, psi, npsi, s.logW)
		}
		for i, p := range t.obs {
			s.obs[i] = o.expect(p, psi) / npsi
		}
		// H psi into a (free now): energy and <H^2>.
		nh, _ := o.step(a, psi, stateVec{}, 1, 0, 0, 0)
		e, _ := o.dot(psi, a)
		s.energy, s.h2 = e/npsi, nh/npsi
		samples[r] = s
	}
	t.estimate(res, samples)
	if err := res.checkFinite(); err != nil {
		return nil, err
	}
	return res, nil
}

// estimate forms the ratio estimators and their jackknife errors.
func (t *typicalRun) estimate(res *TypicalResult, samples []vectorSample) {
	R := len(samples)
	n := float64(res.NumQubits)
	maxLog := math.Inf(-1)
	for _, s := range samples {
		maxLog = max(maxLog, s.logW)
	}
	w := make([]float64, R)
	for i, s := range samples {
		w[i] = math.Exp(s.logW - maxLog)
	}
	jk := newJackknife(w)

	// ln Z = maxLog + ln(mean w).
	res.LogZ = jk.estimate(func(sumW, _ float64, count int) float64 {
		return maxLog + math.Log(sumW/float64(count))
	}, nil)

	q := make([]float64, R)
	res.Expect = make([]Estimate, len(t.obs))
	for k := range t.obs {
		for i, s := range samples {
			q[i] = s.obs[k]
		}
		res.Expect[k] = jk.ratio(q)
	}

	e := make([]float64, R)
	h2 := make([]float64, R)
	for i, s := range samples {
		e[i], h2[i] = s.energy, s.h2
	}
	res.Energy = jk.ratio(e)
	res.EnergyPerSite = Estimate{res.Energy.Value / n, res.Energy.Stderr / n}
	beta := t.beta
	res.HeatCapacity = jk.combine(func(m func([]float64) float64, _ float64) float64 {
		mean := m(e)
		return beta * beta * (m(h2) - mean*mean)
	})
	res.Entropy = jk.combine(func(m func([]float64) float64, logMeanW float64) float64 {
		return maxLog + logMeanW + beta*m(e)
	})
}

// jackknife evaluates weighted-mean estimators on all R vectors and with
// each vector left out in turn (Efron & Tibshirani, An Introduction to the
// Bootstrap, ch. 11): stderr^2 = (R-1)/R sum_i (theta_i - mean theta)^2.
// Leave-one-out sums are summed afresh, not obtained by subtraction, so a
// dominant vector at low temperature loses no precision (the cost, R^2 per
// estimator, is negligible beside one matrix-vector product).
type jackknife struct {
	w []float64
}

func newJackknife(w []float64) *jackknife { return &jackknife{w: w} }

// sums returns sum w and sum w q over all vectors (skip < 0) or all but
// vector skip.
func (j *jackknife) sums(q []float64, skip int) (sw, swq float64) {
	for i, w := range j.w {
		if i == skip {
			continue
		}
		sw += w
		if q != nil {
			swq += w * q[i]
		}
	}
	return sw, swq
}

// estimate applies f(sum w, sum w q, count) to all vectors and to each
// leave-one-out set.
func (j *jackknife) estimate(f func(sumW, sumWQ float64, count int) float64, q []float64) Estimate {
	R := len(j.w)
	sw, swq := j.sums(q, -1)
	value := f(sw, swq, R)
	loo := make([]float64, R)
	for i := range loo {
		a, b := j.sums(q, i)
		loo[i] = f(a, b, R-1)
	}
	return Estimate{Value: value, Stderr: jackknifeError(loo)}
}

// ratio estimates sum w q / sum w.
func (j *jackknife) ratio(q []float64) Estimate {
	return j.estimate(func(sw, swq float64, _ int) float64 { return swq / sw }, q)
}

// combine estimates f(m, logMeanW), where m(q) is the weighted mean of q
// and logMeanW the log of the mean weight, over all vectors and each
// leave-one-out set.
func (j *jackknife) combine(f func(m func([]float64) float64, logMeanW float64) float64) Estimate {
	R := len(j.w)
	eval := func(skip, count int) float64 {
		sw, _ := j.sums(nil, skip)
		m := func(q []float64) float64 {
			_, swq := j.sums(q, skip)
			return swq / sw
		}
		return f(m, math.Log(sw/float64(count)))
	}
	value := eval(-1, R)
	loo := make([]float64, R)
	for i := range loo {
		loo[i] = eval(i, R-1)
	}
	return Estimate{Value: value, Stderr: jackknifeError(loo)}
}

func jackknifeError(loo []float64) float64 {
	R := float64(len(loo))
	var mean float64
	for _, v := range loo {
		mean += v
	}
	mean /= R
	var ss float64
	for _, v := range loo {
		ss += (v - mean) * (v - mean)
	}
	return math.Sqrt((R - 1) / R * ss)
}

// checkFinite refuses a result with a NaN or infinity anywhere.
func (r *TypicalResult) checkFinite() error {
	check := func(name string, e Estimate) error {
		if math.IsNaN(e.Value) || math.IsInf(e.Value, 0) || math.IsNaN(e.Stderr) || math.IsInf(e.Stderr, 0) {
			return fmt.Errorf("validate: typicality estimate of %s is not finite (%v ± %v)", name, e.Value, e.Stderr)
		}
		return nil
	}
	for _, c := range []struct {
		name string
		e    Estimate
	}{{"ln Z", r.LogZ}, {"energy", r.Energy}, {"entropy", r.Entropy}, {"heat capacity", r.HeatCapacity}} {
		if err := check(c.name, c.e); err != nil {
			return err
		}
	}
	for i, e := range r.Expect {
		if err := check(fmt.Sprintf("observable %d", i), e); err != nil {
			return err
		}
	}
	return nil
}
