package bulk

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// CurieWeissOptions adjusts FitCurieWeiss.
type CurieWeissOptions struct {
	// Above is the lowest temperature of the tail fitted, K; zero takes
	// T >= Tmax/4, and at least the five hottest points. A narrower
	// window (Tmax/2) leaves theta and chi0 so correlated that the
	// J/T corrections to the form pull theta far off (for the chain of
	// the bulk demo, 30 K instead of z J/4 = 13.7 K; 18 K at Tmax/4).
	Above float64
	// Chi0 adds a temperature-independent term to the fit.
	Chi0 bool
}

// CurieWeiss is the first look at a susceptibility curve: the fit of its
// high-temperature tail to
//
//	chi(T) = C / (T + theta) [+ chi0]
//
// with theta > 0 for antiferromagnetic coupling (the convention of this
// package; many papers write T - theta_CW with theta_CW = -theta). For
// spin S on a lattice of coordination z with H = J sum S_i.S_j, the
// high-temperature expansion gives theta = z J S(S+1)/3 (derived; z J/4
// for S = 1/2), and C = n N_A g^2 mu_B^2 S(S+1)/(3 k_B) for n spins per
// formula unit; corrections are of relative order J/T.
type CurieWeiss struct {
	Series        *Series
	Above         float64 // lowest temperature fitted, K
	Points        int
	C, CErr       float64 // emu K/mol
	Theta         float64 // K
	ThetaErr      float64
	Chi0, Chi0Err float64 // emu/mol; zero when not fitted
	Chi0Fitted    bool
	Chi2          float64
	DOF           int
	PValue        float64 // NaN when the errors were unknown
}

// FitCurieWeiss fits the high-temperature tail of a chi series.
func FitCurieWeiss(s *Series, opt CurieWeissOptions) (*CurieWeiss, error) {
	if s.Quantity != Susceptibility {
		return nil, fmt.Errorf("%s: the Curie–Weiss first look needs chi(T), not %s", s.Label(), s.Quantity)
	}
	above := opt.Above
	_, tmax := s.TRange()
	if above == 0 {
		above = tmax / 4
	}
	var pts []Point
	for _, p := range s.Points {
		if p.T >= above {
			pts = append(pts, p)
		}
	}
	if opt.Above == 0 && len(pts) < 5 && len(s.Points) >= 5 {
		pts = slices.Clone(s.Points[len(s.Points)-5:])
		above = pts[0].T
	}
	nPar := 2
	if opt.Chi0 {
		nPar = 3
	}
	if len(pts) <= nPar {
		return nil, fmt.Errorf("%s: %d points above %.4g K, too few for a Curie–Weiss fit of %d parameters", s.Label(), len(pts), above, nPar)
	}
	sigma := make([]float64, len(pts))
	for i, p := range pts {
		sigma[i] = p.Stderr
		if s.StderrUnknown {
			sigma[i] = 1
		}
	}
	x0 := curieWeissStart(pts, nPar)
	prob := lsqProblem{nRes: len(pts), nPar: nPar,
		lower: []float64{0, math.Inf(-1), math.Inf(-1)}[:nPar],
		upper: []float64{math.Inf(1), math.Inf(1), math.Inf(1)}[:nPar]}
	prob.eval = func(x, r []float64, jac *mat.Dense) error {
		for i, p := range pts {
			den := p.T + x[1]
			if den <= 0 {
				return fmt.Errorf("T + theta <= 0 at %g K", p.T)
			}
			m := x[0] / den
			if nPar == 3 {
				m += x[2]
			}
			r[i] = (m - p.Value) / sigma[i]
			if jac != nil {
				jac.Set(i, 0, 1/den/sigma[i])
				jac.Set(i, 1, -x[0]/(den*den)/sigma[i])
				if nPar == 3 {
					jac.Set(i, 2, 1/sigma[i])
				}
			}
		}
		return nil
	}
	res, err := levenbergMarquardt(prob, x0)
	if err != nil {
		return nil, fmt.Errorf("%s: Curie–Weiss fit: %w", s.Label(), err)
	}
	if !res.converged {
		return nil, fmt.Errorf("%s: Curie–Weiss fit did not converge (%s)", s.Label(), res.reason)
	}
	cov, err := covarianceOf(res.jac)
	if err != nil {
		return nil, fmt.Errorf("%s: Curie–Weiss fit: %v", s.Label(), err)
	}
	dof := len(pts) - nPar
	scale := 1.0
	if s.StderrUnknown {
		scale = res.chi2 / float64(dof)
	}
	cw := &CurieWeiss{Series: s, Above: above, Points: len(pts), Chi2: res.chi2, DOF: dof, PValue: math.NaN(),
		C: res.x[0], CErr: math.Sqrt(scale * cov.At(0, 0)), Theta: res.x[1], ThetaErr: math.Sqrt(scale * cov.At(1, 1))}
	if nPar == 3 {
		cw.Chi0Fitted, cw.Chi0, cw.Chi0Err = true, res.x[2], math.Sqrt(scale*cov.At(2, 2))
	}
	if !s.StderrUnknown {
		cw.PValue = distuv.ChiSquared{K: float64(dof)}.Survival(res.chi2)
	}
	return cw, nil
}

// curieWeissStart solves 1/chi = T/C + theta/C by unweighted linear least
// squares over the tail.
func curieWeissStart(pts []Point, nPar int) []float64 {
	var sx, sy, sxx, sxy float64
	n := float64(len(pts))
	for _, p := range pts {
		y := 1 / p.Value
		sx += p.T
		sy += y
		sxx += p.T * p.T
		sxy += p.T * y
	}
	slope := (n*sxy - sx*sy) / (n*sxx - sx*sx)
	icept := (sy - slope*sx) / n
	x := []float64{1 / slope, icept / slope, 0}
	if !(x[0] > 0) || math.IsInf(x[0], 0) {
		x[0], x[1] = pts[0].Value*pts[0].T, 0
	}
	return x[:nPar]
}

// SpinHalfG returns the g-factor that the Curie constant implies for
// spin-1/2 sites, n per formula unit, and its error.
func (cw *CurieWeiss) SpinHalfG(n float64) (g, gErr float64) {
	unit := n * CurieConstant(1, 0.5)
	g = math.Sqrt(cw.C / unit)
	return g, g * cw.CErr / (2 * cw.C)
}

// SpinHalfExchange returns J = 3 theta/(z S(S+1)) = 4 theta/z for spin-1/2
// on a lattice of coordination z, and its error.
func (cw *CurieWeiss) SpinHalfExchange(z int) (j, jErr float64) {
	return 4 * cw.Theta / float64(z), 4 * cw.ThetaErr / float64(z)
}
