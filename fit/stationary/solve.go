package stationary

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/floats"

	"warmfit/fit"
)

// ErrNoInformation is returned (wrapped) when the constraints resolve no
// direction beyond noise: at infinite temperature every constraint
// vanishes, and with too few shots the noise hides them.
var ErrNoInformation = errors.New("stationary: the constraints carry no information beyond their noise")

// Options tune Solve. The zero value gives the defaults.
type Options struct {
	// Low is the number of lowest eigenvalues of the weighted system
	// reported (default 6).
	Low int
	// MaxIterations bounds the reweighting iterations (default 12).
	MaxIterations int
	// DenseLimit is the largest number of parameters solved with a dense
	// eigendecomposition (default 1500); larger systems use Lanczos.
	DenseLimit int
	// InvisibleError is the standard error, in units of the unit
	// direction, above which an eigen-direction counts as not resolved
	// (default 0.3).
	InvisibleError float64
}

func (o Options) withDefaults() Options {
	if o.Low <= 0 {
		o.Low = 6
	}
	if o.MaxIterations <= 0 {
		o.MaxIterations = 12
	}
	if o.DenseLimit <= 0 {
		o.DenseLimit = 1500
	}
	if o.InvisibleError <= 0 {
		o.InvisibleError = 0.3
	}
	return o
}

// Direction is the learned null direction of the constraints.
type Direction struct {
	// Theta is the unit parameter vector (aligned with System.Params),
	// its largest component positive.
	Theta []float64
	// Spectrum holds the lowest eigenvalues of the noise-weighted system
	// X at Theta, ascending. With unit Theta, theta^T X theta is the
	// chi² of the weighted residuals; moving a distance e along
	// eigenvector j raises it by about e² (Spectrum[j] - Spectrum[0]).
	Spectrum []float64
	// StdErr[j] = 1/sqrt(Spectrum[j] - max(Spectrum[0], 0)) (j >= 1;
	// StdErr[0] is 0): the standard error along eigenvector j.
	StdErr []float64
	// NoiseSpectrum is the same spectrum for pure-noise entries with the
	// same covariances and weights (one seeded draw): what the
	// constraints would show without signal.
	NoiseSpectrum []float64
	// Invisible lists the eigen-directions the data do not resolve
	// (StdErr above Options.InvisibleError), and the conserved
	// quantities found by their vanishing constraints, first.
	Invisible []InvisibleDirection
	// Chi2 is the weighted residual sum of squares at Theta and
	// Rows the number of constraints used (Dropped left out because a
	// string had no data).
	Chi2          float64
	Rows, Dropped int
	// Weak is set when some resolved direction still has a standard
	// error above 0.1 of the unit direction: the estimator is then not
	// yet in its linear regime and seeded repetitions show error bars
	// too small by up to about 2 (comparison table, compare_test.go).
	Weak bool
	// Misfit is set when Chi2 is more than five standard deviations above
	// its degrees of freedom (Rows - parameters + 1): the data fit no
	// stationary state of these terms well (terms missing from the
	// template, systematic errors, a state that is not stationary).
	Misfit bool
	// Method is "dense" or "lanczos"; Iterations counts reweightings.
	Method     string
	Iterations int
	// Converged is set when the reweighting settled: the largest change
	// of a component of Theta between two reweightings fell below 1e-9
	// within Options.MaxIterations (LastChange is the last such change).
	// An unsettled direction is still returned, with a WARNING in
	// Summary: it minimises the objective less well than it could.
	Converged  bool
	LastChange float64

	ws     *weighted
	low    lowEigen
	params *fit.Params
	asm    *assembled // nil when dense
}

// InvisibleDirection is an eigen-direction of the constraints that the
// data do not resolve.
type InvisibleDirection struct {
	Vector []float64 // unit, in parameter space, orthogonal to Theta
	StdErr float64
	// Name says what it is: a conserved quantity the terms can express
	// (for example "total Z (uniform Z field)") or "not resolved by the
	// data" when it matches none.
	Name string
	// Chi2 and DOF are, for a conserved quantity, the constraint
	// residuals along it (consistent with noise: chi² near DOF).
	Chi2 float64
	DOF  int

	conserved bool
}

// Solve finds the direction of the coefficients from estimates of
// sys.Strings. It minimises the noise-weighted residual
// sum_a r_a(theta)² / Var(r_a(theta)) over unit theta by iterated
// reweighting: each step takes the lowest eigenvector of
// X = sum_a w_a M_a M_a^T - sum_a w_a² r_a² C_a (weighted total least
// squares with the first-order noise correction), dense for small
// systems and by Lanczos for large ones. It returns ErrNoInformation
// (wrapped, with the spectrum in the returned Direction) when no
// direction beyond the lowest is resolved.
func Solve(sys *System, est *fit.Estimates, opt Options) (*Direction, error) {
	opt = opt.withDefaults()
	ws, err := newWeighted(sys, est)
	if err != nil {
		return nil, err
	}
	if ws.rows() == 0 {
		return nil, fmt.Errorf("%w: no constraint has data for all its strings (%d rows left out)", ErrNoInformation, ws.dropped)
	}
	np := ws.np
	k := min(opt.Low, np)
	d := &Direction{ws: ws, Rows: ws.rows(), Dropped: ws.dropped, params: sys.params}
	// The sparse path (assembled X) has per-row weights only.
	ws.full = ws.full && np <= opt.DenseLimit
	var asm *assembled // the pattern of X, built once for Lanczos
	eig := func(w *weighted, start [][]float64) (lowEigen, error) {
		if np <= opt.DenseLimit {
			return denseLowest(w.dense(), np, k)
		}
		if w.haveFull { // not per-row: no assembled form
			return lanczosLowest(w.mulVec, np, k, start, 1e-9, 20000)
		}
		if asm == nil {
			asm = newAssembled(w)
		}
		asm.fill(w)
		return lanczosLowest(asm.mulVec, np, k, start, 1e-9, 20000)
	}
	// Conserved quantities the terms can express (uniform fields) whose
	// constraints vanish within noise are invisible exactly; they are
	// pushed out of the eigenproblem (penalty) so that the weights,
	// which depend on the direction, cannot drift into them.
	conserved := findConserved(sys, ws)
	ws.penalty = conserved
	// Start: weights that do not depend on the direction, no noise
	// correction; then the fundamental numerical scheme (weights and
	// noise correction at the direction), iterated.
	ws.reweight(nil)
	ws.corr = noCorrection
	low, err := eig(ws, nil)
	if err != nil {
		return nil, err
	}
	theta := continueDirection(low, nil, opt)
	d.Iterations = 1
	ws.corr = solveCorrection
	for it := 1; it < opt.MaxIterations; it++ {
		ws.reweight(theta)
		low, err = eig(ws, low.vectors)
		if err != nil {
			return nil, err
		}
		next := continueDirection(low, theta, opt)
		d.Iterations = it + 1
		change := 0.0
		for i := range next {
			change = max(change, math.Abs(next[i]-theta[i]))
		}
		theta = next
		d.LastChange = change
		if change < 1e-9 {
			d.Converged = true
			break
		}
	}
	ws.reweight(theta)
	low, err = eig(ws, low.vectors)
	if err != nil {
		return nil, err
	}
	theta = continueDirection(low, theta, opt)
	if theta[floats.MaxIdx(absAll(theta))] < 0 {
		floats.Scale(-1, theta)
	}
	ws.reweight(theta)
	d.Chi2 = ws.chi2()
	if dof := float64(max(d.Rows-np+1, 1)); d.Chi2 > dof+5*math.Sqrt(2*dof) {
		d.Misfit = true
	}
	d.Theta, d.low, d.Method, d.asm = theta, low, low.method, asm
	d.Spectrum = low.values
	nlow, err := eig(ws.noiseOnly(theta), nil)
	if err != nil {
		return nil, err
	}
	d.NoiseSpectrum = nlow.values
	d.StdErr = make([]float64, len(low.values))
	for j := 1; j < len(low.values); j++ {
		// At a fixed point of the reweighting theta^T X theta = 0 exactly
		// (the weights are 1/Var(r_a) at theta); a lowest eigenvalue below
		// zero means the iteration wandered (no signal), and measuring
		// from zero keeps the verdict conservative.
		gap := low.values[j] - max(low.values[0], 0)
		d.StdErr[j] = math.Inf(1)
		if gap > 0 {
			d.StdErr[j] = 1 / math.Sqrt(gap)
		}
		if d.StdErr[j] > opt.InvisibleError {
			d.Invisible = append(d.Invisible, InvisibleDirection{Vector: append([]float64(nil), low.vectors[j]...), StdErr: d.StdErr[j]})
		}
	}
	for _, c := range conserved {
		d.Invisible = append([]InvisibleDirection{{Vector: append([]float64(nil), c.vector...), StdErr: math.Inf(1), Name: c.name, conserved: true}}, d.Invisible...)
	}
	// Theta is a combination of the near-null eigenvectors; make the
	// invisible directions orthogonal to it (Gram-Schmidt, lowest first).
	vs := [][]float64{append([]float64(nil), theta...)}
	for _, inv := range d.Invisible {
		vs = append(vs, inv.Vector)
	}
	orthonormalise(vs)
	nameInvisible(sys, d)
	for j := 1; j < len(d.StdErr); j++ {
		if se := d.StdErr[j]; se > 0.1 && se <= opt.InvisibleError {
			d.Weak = true
		}
	}
	if floor := -max(10, 0.1*float64(d.Rows)); d.Spectrum[0] < floor {
		return d, fmt.Errorf("%w: the reweighting did not settle (lowest eigenvalue %.4g, below %.3g: at a settled direction it is near zero); the noise correction dominates the signal, or the data are not consistent with any stationary state of these terms",
			ErrNoInformation, d.Spectrum[0], floor)
	}
	if off, total := switchedOff(sys, theta); off > 0 {
		return d, fmt.Errorf("%w: the direction all but vanishes on %d of %d sites (below 2%% of the median site weight): with this little signal the noise-weighted objective prefers switching regions off to fitting them; more shots or a lower temperature are needed",
			ErrNoInformation, off, total)
	}
	if chi2, dof := signalChi2(ws, est); chi2 < float64(dof)+5*math.Sqrt(2*float64(dof)) {
		return d, fmt.Errorf("%w: the correlators the constraints use are consistent with zero (chi2 %.4g for %d values), as at infinite temperature; more shots or a lower temperature are needed",
			ErrNoInformation, chi2, dof)
	}
	if nres := len(d.Invisible) - len(conserved); len(low.values) > 1 && nres >= len(low.values)-1 {
		return d, fmt.Errorf("%w: none of the %d lowest directions is resolved (next standard error %.3g); more shots or a lower temperature are needed",
			ErrNoInformation, len(low.values), d.StdErr[1])
	}
	return d, nil
}

// switchedOff counts the sites whose weight sum of theta_p² over the
// parameters of their terms is below 2% of the median site weight (and
// returns the number of sites with terms). A true Hamiltonian rarely
// vanishes on a region; the weighted objective does, when the signal is
// too weak, because rows where theta vanishes cost nothing.
func switchedOff(sys *System, theta []float64) (off, total int) {
	weight := map[int]float64{}
	for k, t := range sys.terms {
		x := theta[sys.params.Of[k]]
		for _, s := range t.Sites {
			weight[s] += x * x
		}
	}
	vals := make([]float64, 0, len(weight))
	for _, w := range weight {
		vals = append(vals, w)
	}
	sort.Float64s(vals)
	if len(vals) == 0 {
		return 0, 0
	}
	median := vals[len(vals)/2]
	for _, w := range vals {
		if w < 0.02*median {
			off++
		}
	}
	return off, len(vals)
}

// signalChi2 returns sum_j m_j²/Var(m_j) over the strings the used rows
// need, and their number: chi² with that many degrees of freedom when
// every expectation is zero (rho proportional to the identity; distinct
// Pauli strings are then uncorrelated), far above it with signal.
func signalChi2(ws *weighted, est *fit.Estimates) (float64, int) {
	seen := map[int32]bool{}
	var chi2 float64
	for _, j := range ws.str {
		if seen[j] {
			continue
		}
		seen[j] = true
		if v := est.Cov.At(int(j), int(j)); v > 0 {
			chi2 += est.Values[j] * est.Values[j] / v
		}
	}
	return chi2, len(seen)
}

// continueDirection picks the next direction of the reweighting: the
// lowest eigenvector at first, then the previous direction projected on
// the span of the eigenvectors not resolved from the lowest (standard
// error above InvisibleError). With an exactly conserved quantity the
// lowest eigenvalue is degenerate and its eigenvector an arbitrary mix;
// projecting keeps the iteration from wandering inside that span.
func continueDirection(low lowEigen, prev []float64, opt Options) []float64 {
	v0 := append([]float64(nil), low.vectors[0]...)
	if prev == nil {
		return v0
	}
	next := make([]float64, len(prev))
	limit := 1 / (opt.InvisibleError * opt.InvisibleError)
	for j, v := range low.vectors {
		if j > 0 && low.values[j]-max(low.values[0], 0) >= limit {
			break
		}
		floats.AddScaled(next, floats.Dot(v, prev), v)
	}
	n := floats.Norm(next, 2)
	if n < 0.5 {
		if floats.Dot(v0, prev) < 0 {
			floats.Scale(-1, v0)
		}
		return v0
	}
	floats.Scale(1/n, next)
	return next
}

func absAll(v []float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = math.Abs(x)
	}
	return out
}

// conservedCandidates returns the uniform-field directions the terms can
// express (one per letter with at least two single-site terms), named.
func conservedCandidates(sys *System) (names []string, vecs [][]float64) {
	p := sys.params
	for _, l := range []string{"X", "Y", "Z"} {
		v := make([]float64, p.NumParams())
		count := 0
		for q, members := range p.Members {
			all := true
			for _, k := range members {
				if t := sys.terms[k]; len(t.Sites) != 1 || t.Pauli != l {
					all = false
				}
			}
			if all {
				v[q] = 1
				count += len(members)
			}
		}
		if count >= 2 {
			floats.Scale(1/floats.Norm(v, 2), v)
			names = append(names, fmt.Sprintf("total %s (uniform %s field)", l, l))
			vecs = append(vecs, v)
		}
	}
	return names, vecs
}

// nameInvisible names each invisible direction after the conserved
// candidate it overlaps best (|overlap| > 0.8), else as unresolved.
func nameInvisible(sys *System, d *Direction) {
	names, vecs := conservedCandidates(sys)
	// Compare with the candidates' parts orthogonal to Theta, as the
	// invisible directions are.
	for _, v := range vecs {
		floats.AddScaled(v, -floats.Dot(v, d.Theta), d.Theta)
		if n := floats.Norm(v, 2); n > 0 {
			floats.Scale(1/n, v)
		}
	}
	for i := range d.Invisible {
		inv := &d.Invisible[i]
		if inv.conserved {
			continue
		}
		inv.Name = "not resolved by the data (too few shots or too little signal)"
		best := 0.8
		for c, v := range vecs {
			if o := math.Abs(floats.Dot(v, inv.Vector)); o > best {
				best, inv.Name = o, names[c]
			}
		}
	}
}

// ParamOf returns the parameter of term k.
func (d *Direction) ParamOf(k int) int { return int(d.params.Of[k]) }

// Summary describes the spectrum and the invisible directions in a few
// lines for reports.
func (d *Direction) Summary() string {
	var b strings.Builder
	fmt.Fprintf(&b, "stationarity: %d constraints (%d left out for lack of data), chi2 %.4g, solver %s, %d reweightings\n",
		d.Rows, d.Dropped, d.Chi2, d.Method, d.Iterations)
	vals := make([]string, len(d.Spectrum))
	for j, v := range d.Spectrum {
		vals[j] = fmt.Sprintf("%.4g", v)
	}
	fmt.Fprintf(&b, "lowest eigenvalues of the weighted system: %s\n", strings.Join(vals, " "))
	nvals := make([]string, len(d.NoiseSpectrum))
	for j, v := range d.NoiseSpectrum {
		nvals[j] = fmt.Sprintf("%.4g", v)
	}
	fmt.Fprintf(&b, "the same for noise alone: %s\n", strings.Join(nvals, " "))
	if d.Misfit {
		fmt.Fprintf(&b, "WARNING: constraint chi2 %.4g far above its %d degrees of freedom: the data fit no stationary state of these terms well (a term missing from the template, systematic errors, or a non-stationary state)\n",
			d.Chi2, max(d.Rows-len(d.Theta)+1, 1))
	}
	if !d.Converged {
		fmt.Fprintf(&b, "WARNING: the reweighting did not settle in %d iterations (last change of a component %.3g, wanted below 1e-9): the direction is not a fixed point of the noise-weighted objective\n", d.Iterations, d.LastChange)
	}
	if d.Weak {
		fmt.Fprintf(&b, "WARNING: weak signal: a resolved direction has a standard error of %.3g of the unit direction; error bars may be too small (seeded repetitions at beta x max|coeff| = 0.1 gave pull rms 2.2); more shots or a lower temperature help\n", maxFinite(d.StdErr))
	}
	if len(d.Invisible) == 0 {
		fmt.Fprintf(&b, "every other direction is resolved (largest standard error %.3g)\n", maxFinite(d.StdErr))
	}
	for _, inv := range d.Invisible {
		fmt.Fprintf(&b, "invisible direction (standard error %.3g): %s\n", inv.StdErr, inv.Name)
	}
	return b.String()
}

func maxFinite(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	for i := len(s) - 1; i >= 0; i-- {
		if !math.IsInf(s[i], 0) {
			return s[i]
		}
	}
	return math.Inf(1)
}
