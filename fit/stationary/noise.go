package stationary

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// noiseOnly returns a copy of ws whose entries are pure noise: each
// row's values drawn from a Gaussian with the row's covariance and mean
// zero (no signal), with the same weights. Its spectrum is what the
// constraints would show if the state carried no information (beta = 0);
// the seed is fixed, so results are deterministic.
func (ws *weighted) noiseOnly(theta []float64) *weighted {
	nw := *ws
	nw.val = make([]float64, len(ws.val))
	nw.w = append([]float64(nil), ws.w...)
	nw.floor = append([]float64(nil), ws.floor...)
	nw.r = make([]float64, len(ws.r))
	rng := rand.New(rand.NewPCG(12, 0x9e3779b97f4a7c15))
	for a := range ws.rows() {
		lo, hi, c := ws.block(a)
		k := hi - lo
		sym := mat.NewSymDense(k, nil)
		for i := range k {
			for j := i; j < k; j++ {
				sym.SetSym(i, j, (c[i*k+j]+c[j*k+i])/2)
			}
		}
		g := make([]float64, k)
		for i := range g {
			g[i] = rng.NormFloat64()
		}
		var ch mat.Cholesky
		if ch.Factorize(sym) {
			var l mat.TriDense
			ch.LTo(&l)
			for i := range k {
				var s float64
				for j := 0; j <= i; j++ {
					s += l.At(i, j) * g[j]
				}
				nw.val[lo+i] = s
			}
		} else {
			for i := range k {
				nw.val[lo+i] = math.Sqrt(max(c[i*k+i], 0)) * g[i]
			}
		}
		var r float64
		for e := lo; e < hi; e++ {
			r += nw.val[e] * theta[ws.param[e]]
		}
		nw.r[a] = r
	}
	return &nw
}
