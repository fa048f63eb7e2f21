package stationary

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"strconv"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/validate"
)

// patchEstimates returns noisy estimates of sys.Strings on an lx×ly open
// square lattice (site x + lx*y) from a documented model of the data:
// each string's expectation is taken from the exact Gibbs state (dense
// ED) of the 3x2 or 2x3 window that contains it (4x2 or 2x4 for strings
// four sites long), nearest the lattice's middle
// first (a cluster approximation of the lattice's state, good at high
// temperature and not exactly stationary for the whole lattice), plus
// a correction that makes the values exactly stationary under the true
// coefficients (projectStationary: patches alone are not, and their
// bias, not the shots, then sets the direction error: 0.40 on 6x6 at
// any number of shots), plus
// Gaussian shot noise of variance (1 - m²)/N with N the shots serving
// the string when every covering:3 basis gets perBasis shots (variances
// only, as for large arrays).
func patchEstimates(tb testing.TB, sys *System, lx, ly int, beta float64, perBasis int64, seed uint64) (*fit.Estimates, int) {
	tb.Helper()
	terms := sys.Terms()
	window := func(s lattice.Term) [4]int {
		minx, miny, maxx, maxy := lx, ly, -1, -1
		for _, site := range s.Sites {
			x, y := site%lx, site/lx
			minx, maxx, miny, maxy = min(minx, x), max(maxx, x), min(miny, y), max(maxy, y)
		}
		// A 3x2 window (wide) unless the string is taller than wide;
		// strings four sites long (far-pair probes of real models) get
		// 4x2 or 2x4.
		bx, by := maxx-minx+1, maxy-miny+1
		wx, wy := max(bx, 3), max(by, 2)
		if by > bx {
			wx, wy = max(bx, 2), max(by, 3)
		}
		if wx*wy > 8 || wx > lx || wy > ly {
			tb.Fatalf("string %s does not fit an 8-site window", s.Key())
		}
		// Window origin: as centred on the string as the lattice allows.
		ox := min(max(minx-(wx-1-(maxx-minx))/2, 0), lx-wx)
		oy := min(max(miny-(wy-1-(maxy-miny))/2, 0), ly-wy)
		return [4]int{ox, oy, wx, wy}
	}
	byWindow := map[[4]int][]int{}
	for j, s := range sys.Strings {
		w := window(s)
		byWindow[w] = append(byWindow[w], j)
	}
	values := make([]float64, len(sys.Strings))
	for w, strs := range byWindow {
		local := map[int]int{}
		for dy := range w[3] {
			for dx := range w[2] {
				local[(w[0]+dx)+lx*(w[1]+dy)] = dx + w[2]*dy
			}
		}
		relabel := func(t lattice.Term) (lattice.Term, bool) {
			sites := make([]int, len(t.Sites))
			for i, s := range t.Sites {
				q, ok := local[s]
				if !ok {
					return lattice.Term{}, false
				}
				sites[i] = q
			}
			nt, err := lattice.NewTerm(t.Pauli, sites, t.Coeff)
			return nt, err == nil
		}
		var pt []lattice.Term
		for _, t := range terms {
			if nt, ok := relabel(t); ok {
				pt = append(pt, nt)
			}
		}
		th, err := validate.ExactThermal(w[2]*w[3], pt, beta)
		if err != nil {
			tb.Fatal(err)
		}
		for _, j := range strs {
			nt, _ := relabel(sys.Strings[j])
			p, err := cluster.TermPauli(nt)
			if err != nil {
				tb.Fatal(err)
			}
			values[j] = th.Expect(p)
		}
	}
	bases, _, err := fit.SchemeBases("covering:3", sys.NumQubits(), terms, 1)
	if err != nil {
		tb.Fatal(err)
	}
	shots := fit.ShotsPerTerm(bases, perBasis, sys.Strings)
	variances := make([]float64, len(values))
	for j, v := range values {
		variances[j] = (1 - v*v) / float64(max(shots[j], 2))
	}
	truth := make([]float64, len(terms))
	for k, t := range terms {
		truth[k] = t.Coeff
	}
	if err := projectStationary(sys, values, truth, variances); err != nil {
		tb.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 5))
	m := len(sys.Strings)
	est := &fit.Estimates{Values: make([]float64, m), Stderr: make([]float64, m), Shots: shots, Cov: cluster.NewSparseSym(m)}
	for j, v := range values {
		varj := (1 - v*v) / float64(max(shots[j], 2))
		est.Values[j] = v + math.Sqrt(varj)*rng.NormFloat64()
		est.Stderr[j] = math.Sqrt(varj)
		est.Cov.Set(j, j, varj)
	}
	return est, len(bases)
}

// benchmarkPatchModel times NewSystem, Solve and Fix (calibrated on
// one coefficient, so that Fix computes the delta-method error bars) on
// the patch model of side×side with perBasis shots in every covering:3
// basis (WARMFIT_BENCH_SHOTS_PER_BASIS and WARMFIT_BENCH_BETA override).
func benchmarkPatchModel(b *testing.B, side int, perBasis int64, opts Options) {
	spec := fmt.Sprintf("square:%dx%d", side, side)
	l, terms := testModel(b, spec, "xxz", map[string]float64{"Jxy": 0.5, "Jz": 0.4, "hz": 0.4, "hx": 0.3}, 0.1, 7)
	if v, err := strconv.ParseInt(os.Getenv("WARMFIT_BENCH_SHOTS_PER_BASIS"), 10, 64); err == nil {
		perBasis = v
	}
	beta := 0.6
	if v, err := strconv.ParseFloat(os.Getenv("WARMFIT_BENCH_BETA"), 64); err == nil {
		beta = v
	}
	// WARMFIT_BENCH_PROBE_DISTANCE=1 probes with the cheaper colouring
	// (a third of the solves; 2% rms from dense at 740 parameters).
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_BENCH_PROBE_DISTANCE")); err == nil && v >= 1 {
		defer func(old int) { sparseColourDistance = old }(sparseColourDistance)
		sparseColourDistance = v
	}
	for range b.N {
		start := time.Now()
		sys, err := NewSystem(l.NumSites(), terms)
		if err != nil {
			b.Fatal(err)
		}
		tSys := time.Since(start)
		est, nb := patchEstimates(b, sys, side, side, beta, perBasis, 1)
		tEst := time.Since(start) - tSys
		b.Logf("%s: %d coefficients, %d constraints, %d correlators, %d bases x %d shots (%.3g in all)",
			spec, sys.Params().NumParams(), sys.NumRows(), len(sys.Strings), nb, perBasis, float64(nb)*float64(perBasis))
		start = time.Now()
		d, err := Solve(sys, est, opts)
		tSolve := time.Since(start)
		if err != nil {
			// A refusal is a result too: report its cost and reason.
			if d == nil {
				b.Fatal(err)
			}
			b.Logf("system %v, estimates %v, solve %v (%s, %d reweightings), refused: %v\n%s",
				tSys, tEst, tSolve, d.Method, d.Iterations, err, d.Summary())
			b.ReportMetric(tSolve.Seconds(), "solve-s")
			continue
		}
		truth := make([]float64, len(terms))
		for k, t := range terms {
			truth[k] = t.Coeff
		}
		start = time.Now()
		// One calibrated coupling fixes the scale (the model has no
		// conserved field: hx breaks U(1)).
		name := sys.Params().Names[0]
		res, err := Fix(sys, est, d, Gauge{Calibrated: map[string]float64{name: truth[0]}}, opts)
		tFix := time.Since(start)
		if err != nil {
			b.Fatal(err)
		}
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		pull, n := 0.0, 0
		for k := range truth {
			if se := res.StdErr[sys.Params().Of[k]]; se > 0 && !math.IsNaN(se) {
				z := (res.Lambda[k] - truth[k]) / se
				pull += z * z
				n++
			}
		}
		b.ReportMetric(float64(sys.Params().NumParams()), "coefficients")
		b.ReportMetric(float64(len(sys.Strings)), "correlators")
		b.ReportMetric(directionError(d.Theta, truth), "direction-error")
		b.ReportMetric(math.Sqrt(pull/float64(max(n, 1))), "pull-rms")
		b.ReportMetric(tSolve.Seconds(), "solve-s")
		b.ReportMetric(tFix.Seconds(), "errorbars-s")
		b.ReportMetric(float64(ms.HeapSys)/(1<<20), "heap-MB")
		b.Logf("system %v, estimates %v, solve %v (%s, %d reweightings), error bars %v (%s; %d of %d finite), warnings %q\n%s",
			tSys, tEst, tSolve, d.Method, d.Iterations, tFix, res.ErrorMethod, n, len(truth), res.Warnings, d.Summary())
	}
}

// The benchmarks time the constraint assembly, the solve and the error
// bars for a disordered XXZ model with X and Z fields at beta 0.6
// (beta x max|coeff| about 0.33), correlators from the patch model with
// 10^6 shots in each covering:3 basis (patchEstimates; its time is
// reported apart, "estimates"): 100, 748, 3080 and 12560 coefficients
// at 4x4... 40x40. With 10^6 shots in all (about 1.8x10^4 per basis)
// the data do not resolve the direction (on 6x6 the noise-weighted
// objective is lower 0.42 away from the truth than at it) and Solve
// refuses, correctly.
func BenchmarkStationarySquare8x8(b *testing.B)   { benchmarkPatchModel(b, 8, 1_000_000, Options{}) }
func BenchmarkStationarySquare10x10(b *testing.B) { benchmarkPatchModel(b, 10, 1_000_000, Options{}) }
func BenchmarkStationarySquare20x20(b *testing.B) { benchmarkPatchModel(b, 20, 1_000_000, Options{}) }
func BenchmarkStationarySquare40x40(b *testing.B) { benchmarkPatchModel(b, 40, 1_000_000, Options{}) }

// Lanczos and the sparse error bars where dense would do: the
// comparison with the dense path.
func BenchmarkStationarySquare8x8Sparse(b *testing.B) {
	benchmarkPatchModel(b, 8, 1_000_000, Options{DenseLimit: 10})
}

func BenchmarkStationarySquare10x10Sparse(b *testing.B) {
	benchmarkPatchModel(b, 10, 1_000_000, Options{DenseLimit: 10})
}

// projectStationary moves values (aligned with sys.Strings) by the
// smallest change, in the metric of the variances, that makes every
// constraint row vanish under lambda: with B the rows×strings matrix of
// the residuals, values -= D B^T (B D B^T)^+ B values, by conjugate
// gradients on B D B^T (consistent, positive semi-definite; CG converges
// to a solution, Hestenes and Stiefel, J. Res. NBS 49, 409 (1952)).
func projectStationary(sys *System, values, lambda, variances []float64) error {
	nr := sys.NumRows()
	applyB := func(dst, v []float64) { // dst = B v
		for a := range nr {
			var s float64
			for _, e := range sys.row(a) {
				s += e.sign * lambda[e.term] * v[e.str]
			}
			dst[a] = s
		}
	}
	applyBt := func(dst, y []float64) { // dst = B^T y
		clear(dst)
		for a := range nr {
			for _, e := range sys.row(a) {
				dst[e.str] += e.sign * lambda[e.term] * y[a]
			}
		}
	}
	tmp := make([]float64, len(values))
	normal := func(dst, y []float64) { // dst = B D B^T y
		applyBt(tmp, y)
		for j := range tmp {
			tmp[j] *= variances[j]
		}
		applyB(dst, tmp)
	}
	b := make([]float64, nr)
	applyB(b, values)
	y := make([]float64, nr)
	r := append([]float64(nil), b...)
	p := append([]float64(nil), r...)
	q := make([]float64, nr)
	rr := dot(r, r)
	target := 1e-24 * rr
	for it := 0; rr > target; it++ {
		if it == 20*nr+1000 {
			return fmt.Errorf("projectStationary: CG not converged (residual %.3g of %.3g)", math.Sqrt(rr), math.Sqrt(dot(b, b)))
		}
		normal(q, p)
		alpha := rr / dot(p, q)
		for i := range y {
			y[i] += alpha * p[i]
			r[i] -= alpha * q[i]
		}
		next := dot(r, r)
		for i := range p {
			p[i] = r[i] + next/rr*p[i]
		}
		rr = next
	}
	applyBt(tmp, y)
	for j := range values {
		values[j] -= variances[j] * tmp[j]
	}
	return nil
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
