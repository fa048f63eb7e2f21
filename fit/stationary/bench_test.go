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
// ED) of the 3x2 or 2x3 window that contains it, nearest the lattice's middle
// first (a cluster approximation of the lattice's state, good at high
// temperature and not exactly stationary for the whole lattice), plus
// Gaussian shot noise of variance (1 - m²)/N with N the shots serving
// the string when totalShots are spread over the covering:3 bases
// (variances only, as for large arrays).
func patchEstimates(tb testing.TB, sys *System, lx, ly int, beta float64, totalShots int64, seed uint64) (*fit.Estimates, int) {
	tb.Helper()
	terms := sys.Terms()
	window := func(s lattice.Term) [4]int {
		minx, miny, maxx, maxy := lx, ly, -1, -1
		for _, site := range s.Sites {
			x, y := site%lx, site/lx
			minx, maxx, miny, maxy = min(minx, x), max(maxx, x), min(miny, y), max(maxy, y)
		}
		// A 3x2 window (wide) unless the string is taller than wide.
		wx, wy := 3, 2
		if maxy-miny > maxx-minx {
			wx, wy = 2, 3
		}
		if maxx-minx >= wx || maxy-miny >= wy {
			tb.Fatalf("string %s does not fit a 3x2 window", s.Key())
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
		th, err := validate.ExactThermal(6, pt, beta)
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
	perBasis := totalShots / int64(len(bases))
	shots := fit.ShotsPerTerm(bases, perBasis, sys.Strings)
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

func benchmarkPatchModel(b *testing.B, side int, totalShots int64, opts Options) {
	spec := fmt.Sprintf("square:%dx%d", side, side)
	l, terms := testModel(b, spec, "xxz", map[string]float64{"Jxy": 0.5, "Jz": 0.4, "hz": 0.4, "hx": 0.3}, 0.1, 7)
	for range b.N {
		start := time.Now()
		sys, err := NewSystem(l.NumSites(), terms)
		if err != nil {
			b.Fatal(err)
		}
		tSys := time.Since(start)
		beta := 0.6
		if v, err := strconv.ParseFloat(os.Getenv("WARMFIT_BENCH_BETA"), 64); err == nil {
			beta = v
		}
		est, nb := patchEstimates(b, sys, side, side, beta, totalShots, 1)
		tEst := time.Since(start) - tSys
		d, err := Solve(sys, est, opts)
		tSolve := time.Since(start) - tSys - tEst
		if err != nil {
			// A refusal is a result too: report its cost and reason.
			if d == nil {
				b.Fatal(err)
			}
			b.Logf("%s: system %v, estimates %v, solve %v (%s, %d reweightings), refused: %v\n%s",
				spec, tSys, tEst, tSolve, d.Method, d.Iterations, err, d.Summary())
			b.ReportMetric(tSolve.Seconds(), "solve-s")
			continue
		}
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		truth := make([]float64, len(terms))
		for k, t := range terms {
			truth[k] = t.Coeff
		}
		b.ReportMetric(float64(sys.Params().NumParams()), "coefficients")
		b.ReportMetric(float64(len(sys.Strings)), "correlators")
		b.ReportMetric(directionError(d.Theta, truth), "direction-error")
		b.ReportMetric(tSolve.Seconds(), "solve-s")
		b.ReportMetric(float64(ms.HeapSys)/(1<<20), "heap-MB")
		b.Logf("%s: %d coefficients, %d constraints, %d correlators, %d bases; system %v, estimates %v, solve %v (%s, %d reweightings)\n%s",
			spec, sys.Params().NumParams(), sys.NumRows(), len(sys.Strings), nb, tSys, tEst, tSolve, d.Method, d.Iterations, d.Summary())
	}
}

// BenchmarkStationarySquare20x20 and ...40x40 time the constraint
// assembly and the Lanczos solve for 3080 and 12560 coefficients of a
// disordered XXZ model with X and Z fields at beta 0.6 (beta x max|coeff|
// about 0.33), correlators from the 3x2-patch model with 10^6 shots in
// all (patchEstimates; its time is reported apart, "estimates").
func BenchmarkStationarySquare20x20(b *testing.B) { benchmarkPatchModel(b, 20, 1_000_000, Options{}) }

func BenchmarkStationarySquare8x8(b *testing.B) {
	shots := int64(1_000_000)
	if v, err := strconv.ParseInt(os.Getenv("WARMFIT_BENCH_SHOTS"), 10, 64); err == nil {
		shots = v
	}
	benchmarkPatchModel(b, 8, shots, Options{})
}

func BenchmarkStationarySquare8x8Lanczos(b *testing.B) {
	benchmarkPatchModel(b, 8, 1_000_000, Options{DenseLimit: 10})
}

func BenchmarkStationarySquare40x40(b *testing.B) { benchmarkPatchModel(b, 40, 1_000_000, Options{}) }
