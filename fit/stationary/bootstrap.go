package stationary

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"warmfit/fit"
)

// Bootstrap returns parametric-bootstrap standard errors of the
// parameters of Fix: the string estimates are redrawn from a Gaussian
// with their own means and covariance, Solve and Fix are repeated
// resamples times, and the spread of the fixed parameters is returned
// (aligned with System.Params), with the number of resamples Solve or
// Fix refused. Where the delta method is not yet valid (Direction.Weak:
// a resolved direction with a standard error above 0.1 of the unit
// direction), its error bars come out too small (3x3 XXZ at beta 0.35,
// 2x10^5 shots: pull rms 2.3), and the bootstrap sees the nonlinearity
// (Efron and Tibshirani, An Introduction to the Bootstrap, 1993, ch. 6:
// the parametric bootstrap). The seed fixes the draws: results are
// deterministic. Cost: resamples times Solve and Fix.
func Bootstrap(sys *System, est *fit.Estimates, g Gauge, opt Options, resamples int, seed uint64) (stderr []float64, refused int, err error) {
	if resamples < 2 {
		panic(fmt.Sprintf("stationary: Bootstrap needs at least 2 resamples, have %d", resamples))
	}
	// The strings the constraints and the match use, with data.
	var use []int
	missing := map[int]bool{}
	for _, j := range est.Missing {
		missing[j] = true
	}
	for j, v := range est.Values {
		if !missing[j] && !math.IsNaN(v) && est.Cov.At(j, j) > 0 {
			use = append(use, j)
		}
	}
	nu := len(use)
	cov := mat.NewSymDense(nu, nil)
	pos := make(map[int]int, nu)
	for i, j := range use {
		pos[j] = i
	}
	for i, j := range use {
		est.Cov.DoRow(j, func(l int, v float64) {
			if k, ok := pos[l]; ok && k >= i {
				cov.SetSym(i, k, v)
			}
		})
	}
	var ch mat.Cholesky
	if !ch.Factorize(cov) {
		// A covariance estimated from shots can be singular (strings
		// that are products of others in one basis): a small ridge.
		for i := range nu {
			cov.SetSym(i, i, cov.At(i, i)*(1+1e-9)+1e-300)
		}
		if !ch.Factorize(cov) {
			return nil, 0, errors.New("stationary: bootstrap: the covariance of the strings is not positive definite")
		}
	}
	var l mat.TriDense
	ch.LTo(&l)
	rng := rand.New(rand.NewPCG(seed, 0x5bd1e995))
	np := sys.params.NumParams()
	sum, sum2 := make([]float64, np), make([]float64, np)
	good := 0
	z := make([]float64, nu)
	for range resamples {
		for i := range z {
			z[i] = rng.NormFloat64()
		}
		re := &fit.Estimates{Values: append([]float64(nil), est.Values...), Stderr: est.Stderr, Shots: est.Shots, Cov: est.Cov, Missing: est.Missing}
		for i, j := range use {
			var s float64
			for k := 0; k <= i; k++ {
				s += l.At(i, k) * z[k]
			}
			re.Values[j] += s
		}
		d, err := Solve(sys, re, opt)
		if err != nil {
			refused++
			continue
		}
		res, err := Fix(sys, re, d, g, opt)
		if err != nil {
			refused++
			continue
		}
		good++
		for p, v := range res.Theta {
			sum[p] += v
			sum2[p] += v * v
		}
	}
	if good < 2 {
		return nil, refused, fmt.Errorf("stationary: bootstrap: %d of %d resamples refused", refused, resamples)
	}
	stderr = make([]float64, np)
	for p := range np {
		m := sum[p] / float64(good)
		stderr[p] = math.Sqrt(max(sum2[p]/float64(good)-m*m, 0) * float64(good) / float64(good-1))
	}
	return stderr, refused, nil
}
