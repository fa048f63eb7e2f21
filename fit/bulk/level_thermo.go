package bulk

import (
	"math"
	"slices"
)

// levelThermo computes the per-site curves of a finite spectrum: level n
// (mult[n] eigenstates) has energy x_n = scale*energy[n] - field*sz[n] in
// kelvin, and along the k-th tangent its energy moves by o[k][n]
// (Hellmann–Feynman). With d = delta, central moments
// <dx dy> = <(x - <x>)(y - <y>)> and N sites:
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
	c := &Curves{Temps: slices.Clone(temps)}
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
	g := groupLevels(lv, scale, field, o)
	N := float64(sites)
	w := make([]float64, len(g.x))
	for i, t := range temps {
		beta := 1 / t
		var z, mx, ms float64
		for n, x := range g.x {
			w[n] = math.Exp(-beta * (x - g.xmin))
			z += w[n] * g.w0[n]
			mx += w[n] * g.w0[n] * x
			ms += w[n] * g.w1[n]
		}
		mx /= z
		ms /= z
		var vx, vs float64
		for n, x := range g.x {
			dx := x - mx
			vx += w[n] * g.w0[n] * dx * dx
			vs += w[n] * (g.w2[n] - 2*ms*g.w1[n] + ms*ms*g.w0[n])
		}
		vx /= z
		vs /= z
		logZ := math.Log(z) - beta*g.xmin
		c.LogZ.Value[i] = logZ / N
		c.Energy.Value[i] = mx / N
		c.Entropy.Value[i] = (logZ + beta*mx) / N
		c.HeatCapacity.Value[i] = beta * beta * vx / N
		c.Magnetization.Value[i] = ms / N
		c.Susceptibility.Value[i] = beta * vs / N
		for k := range o {
			o0, o1, o2 := g.o0[k], g.o1[k], g.o2[k]
			var mo float64
			for n := range g.x {
				mo += w[n] * o0[n]
			}
			mo /= z
			var xo, x2o, so, s2o float64
			for n, x := range g.x {
				dx := x - mx
				do := o0[n] - mo*g.w0[n] // sum over the group of (o - <o>)
				sdo := o1[n] - ms*o0[n] - mo*g.w1[n] + ms*mo*g.w0[n]
				s2do := o2[n] - 2*ms*o1[n] + ms*ms*o0[n] - mo*(g.w2[n]-2*ms*g.w1[n]+ms*ms*g.w0[n])
				xo += w[n] * dx * do
				x2o += w[n] * dx * dx * do
				so += w[n] * sdo
				s2o += w[n] * s2do
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

// energyGroups is a spectrum with the levels of equal energy x (to
// rounding) merged, keeping the sums over each group that the moments of
// levelThermo need: w_p = sum mult sz^p and o_p[k] = sum mult o_k sz^p.
// At zero field this merges whole SU(2) multiplets across S^z blocks; in
// a field the levels (already merged by energy and S^z) stay as they are.
type energyGroups struct {
	x          []float64
	xmin       float64
	w0, w1, w2 []float64
	o0, o1, o2 [][]float64
}

func groupLevels(lv *spinLevels, scale, field float64, o [][]float64) *energyGroups {
	n := len(lv.energy)
	alloc := func() []float64 { return make([]float64, 0, n) }
	g := &energyGroups{x: alloc(), w0: alloc(), w1: alloc(), w2: alloc(), xmin: math.Inf(1),
		o0: make([][]float64, len(o)), o1: make([][]float64, len(o)), o2: make([][]float64, len(o))}
	for k := range o {
		g.o0[k], g.o1[k], g.o2[k] = alloc(), alloc(), alloc()
	}
	order := lv.byEnergy
	tol := 1e-10 * scale * lv.span
	if field != 0 {
		order, tol = nil, -1
	}
	for j := range lv.energy {
		i := j
		if order != nil {
			i = order[j]
		}
		x := scale*lv.energy[i] - field*lv.sz[i]
		g.xmin = min(g.xmin, x)
		if j == 0 || tol < 0 || x-g.x[len(g.x)-1] > tol {
			g.x = append(g.x, x)
			g.w0, g.w1, g.w2 = append(g.w0, 0), append(g.w1, 0), append(g.w2, 0)
			for k := range o {
				g.o0[k], g.o1[k], g.o2[k] = append(g.o0[k], 0), append(g.o1[k], 0), append(g.o2[k], 0)
			}
		}
		last := len(g.x) - 1
		m, s := lv.mult[i], lv.sz[i]
		g.w0[last] += m
		g.w1[last] += m * s
		g.w2[last] += m * s * s
		for k := range o {
			g.o0[k][last] += m * o[k][i]
			g.o1[k][last] += m * o[k][i] * s
			g.o2[k][last] += m * o[k][i] * s * s
		}
	}
	return g
}
