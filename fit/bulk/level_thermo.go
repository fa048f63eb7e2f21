package bulk

import "math"

// levelThermo computes the per-site curves of a finite spectrum: level n
// (mult[n] eigenstates) has energy x_n = scale*energy[n] - field*sz[n] in kelvin, and along the
// k-th tangent its energy moves by o[k][n] (Hellmann–Feynman). With
// d = delta, central moments <dx dy> = <(x - <x>)(y - <y>)> and N sites:
//
//	log Z/N, E/N = <x>/N, S/N = log Z/N + beta E/N,
//	C/N = beta^2 <dx^2>/N, m = <S^z>/N, chi = beta <dS^2>/N,
//
// and their derivatives along a tangent follow from
// d<A>/dt = <dA_n/dt> - beta <dA do> for level-diagonal A:
//
//	d log Z = -beta <o>, d<x> = <o> - beta <dx do>,
//	d<dx^2> = 2 <dx do> - beta <dx^2 do>, d<S^z> = -beta <dS do>,
//	d<dS^2> = -beta <dS^2 do>.
//
// The Hellmann–Feynman diagonal is enough even for degenerate levels: the
// thermal trace only sees the trace of O over each degenerate space.
func levelThermo(lv *spinLevels, scale, field float64, o [][]float64, sites int, temps []float64) *Curves {
	nT, nK := len(temps), len(o)
	c := &Curves{Temps: append([]float64(nil), temps...)}
	curves := []*Curve{&c.LogZ, &c.Energy, &c.Entropy, &c.HeatCapacity, &c.Magnetization, &c.Susceptibility}
	for _, cv := range curves {
		cv.Value = make([]float64, nT)
		if nK > 0 {
			cv.Deriv = make([][]float64, nK)
			for k := range cv.Deriv {
				cv.Deriv[k] = make([]float64, nT)
			}
		}
	}
	nLev := len(lv.energy)
	x := make([]float64, nLev)
	xmin := math.Inf(1)
	for n, e := range lv.energy {
		x[n] = scale*e - field*lv.sz[n]
		xmin = min(xmin, x[n])
	}
	w := make([]float64, nLev)
	N := float64(sites)
	for i, t := range temps {
		beta := 1 / t
		var z, mx, ms float64
		for n := range x {
			w[n] = lv.mult[n] * math.Exp(-beta*(x[n]-xmin))
			z += w[n]
			mx += w[n] * x[n]
			ms += w[n] * lv.sz[n]
		}
		mx /= z
		ms /= z
		var vx, vs float64
		for n := range x {
			dx, ds := x[n]-mx, lv.sz[n]-ms
			vx += w[n] * dx * dx
			vs += w[n] * ds * ds
		}
		vx /= z
		vs /= z
		logZ := math.Log(z) - beta*xmin
		c.LogZ.Value[i] = logZ / N
		c.Energy.Value[i] = mx / N
		c.Entropy.Value[i] = (logZ + beta*mx) / N
		c.HeatCapacity.Value[i] = beta * beta * vx / N
		c.Magnetization.Value[i] = ms / N
		c.Susceptibility.Value[i] = beta * vs / N
		for k, ok := range o {
			var mo, xo, x2o, so, s2o float64
			for n := range x {
				mo += w[n] * ok[n]
			}
			mo /= z
			for n := range x {
				dx, ds, do := x[n]-mx, lv.sz[n]-ms, w[n]*(ok[n]-mo)
				xo += dx * do
				x2o += dx * dx * do
				so += ds * do
				s2o += ds * ds * do
			}
			xo, x2o, so, s2o = xo/z, x2o/z, so/z, s2o/z
			c.LogZ.Deriv[k][i] = -beta * mo / N
			c.Energy.Deriv[k][i] = (mo - beta*xo) / N
			c.Entropy.Deriv[k][i] = -beta * beta * xo / N
			c.HeatCapacity.Deriv[k][i] = beta * beta * (2*xo - beta*x2o) / N
			c.Magnetization.Deriv[k][i] = -beta * so / N
			c.Susceptibility.Deriv[k][i] = -beta * beta * s2o / N
		}
	}
	return c
}
