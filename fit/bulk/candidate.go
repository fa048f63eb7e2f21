package bulk

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// Param is one parameter of a candidate: its start value (or fixed
// value) in the internal unit.
type Param struct {
	Name  string
	Value float64
	Fixed bool
}

// Candidate is one model to fit: a forward model of a lattice, its
// parameters, and the formula unit. The molar curves it predicts, per mole
// of formula units with SitesPerFormula magnetic sites, are (U = N_A mu_B^2/k_B,
// R = N_A k_B, chi_s, c_s, m_s the per-site curves of the forward model):
//
//	chi(T)   = n g^2 U [(1 - rho) chi_s(T) + rho/(4T)] + chi0
//	C(T)     = n R (1 - rho) c_s(T) + a T^3 + b T^5
//	M(T, H)  = n g [(1 - rho) m_s(T, h) + rho tanh(h/2T)/2] + chi0 H / (N_A mu_B)
//
// with h = g mu_B H / k_B: a fraction rho of the sites are free spin-1/2
// impurities with the same g (their Curie tail, their Brillouin M(H), no
// zero-field heat capacity).
type Candidate struct {
	Name            string
	Forward         ForwardModel
	SitesPerFormula float64 // magnetic sites per formula unit (default 1)
	Params          []Param
}

// NewCandidate returns a candidate whose parameters suit the data: the
// couplings (J, and J2 or Delta when named in extra), then g, chi0 and rho
// when chi or M data are present, and a (and b with phononT5) when C data
// are present. Start values come from start (in internal units) or
// defaults: g = 2, chi0 = a = b = 0, rho = 1e-3, Delta = 1, J2 = 0; J has
// no default. Names in fixed are held at their start value.
func NewCandidate(name string, fwd ForwardModel, data []*Series, extra []string, phononT5 bool, start map[string]float64, fixed map[string]bool) (*Candidate, error) {
	has := map[Quantity]bool{}
	for _, s := range data {
		has[s.Quantity] = true
	}
	names := []string{ParamJ}
	for _, e := range extra {
		switch e {
		case ParamJ2:
			if !slices.Contains(fwd.Couplings(), CouplingJ2) {
				return nil, fmt.Errorf("candidate %s: %s offers no next-nearest coupling J2", name, fwd.Describe())
			}
		case ParamDelta:
			if slices.Contains(fwd.Couplings(), CouplingJ) {
				return nil, fmt.Errorf("candidate %s: %s is isotropic and offers no anisotropy Delta", name, fwd.Describe())
			}
		default:
			return nil, fmt.Errorf("candidate %s: unknown extra coupling %q (want J2 or Delta)", name, e)
		}
		names = append(names, e)
	}
	if has[Susceptibility] || has[Magnetization] {
		names = append(names, ParamG, ParamChi0, ParamImpurity)
	}
	if has[HeatCapacity] {
		names = append(names, ParamPhononA)
		if phononT5 {
			names = append(names, ParamPhononB)
		}
	}
	defaults := map[string]float64{ParamG: 2, ParamImpurity: 1e-3, ParamDelta: 1}
	c := &Candidate{Name: name, Forward: fwd, SitesPerFormula: 1}
	for _, n := range paramCatalogue {
		if !slices.Contains(names, n.Name) {
			continue
		}
		v, ok := start[n.Name]
		if !ok {
			if n.Name == ParamJ {
				return nil, fmt.Errorf("candidate %s: no start value for J (give one, or chi data for the Curie–Weiss first look)", name)
			}
			v = defaults[n.Name]
		}
		if v < n.Lower || v > n.Upper {
			return nil, fmt.Errorf("candidate %s: %s = %g is outside [%g, %g]", name, n.Name, v, n.Lower, n.Upper)
		}
		c.Params = append(c.Params, Param{Name: n.Name, Value: v, Fixed: fixed[n.Name]})
	}
	return c, nil
}

// ParamIndex returns the index of a parameter in Params, or -1.
func (c *Candidate) ParamIndex(name string) int {
	return slices.IndexFunc(c.Params, func(p Param) bool { return p.Name == name })
}

// value returns parameter name from p, or def when the candidate lacks it.
func (c *Candidate) value(p []float64, name string, def float64) float64 {
	if i := c.ParamIndex(name); i >= 0 {
		return p[i]
	}
	return def
}

// prediction holds the model at every data point of a set of series.
type prediction struct {
	value   [][]float64   // [series][point]
	jac     [][][]float64 // [series][point][param], all parameters
	trusted [][]bool      // the forward model trusts the point
	// trustedFrom is the lowest trusted temperature of each zero-field
	// series (+Inf when none); NaN for M(H) series, judged point by point.
	trustedFrom []float64
}

// couplingTangents returns the couplings of the forward model at p and,
// for each parameter, the direction in which it moves them (nil for
// parameters that are not couplings).
func (c *Candidate) couplingTangents(p []float64) ([]float64, [][]float64, error) {
	j, delta, j2 := c.value(p, ParamJ, 0), c.value(p, ParamDelta, 1), c.value(p, ParamJ2, 0)
	isotropic := slices.Contains(c.Forward.Couplings(), CouplingJ)
	if isotropic && delta != 1 {
		return nil, nil, fmt.Errorf("candidate %s: Delta = %g, but %s is isotropic", c.Name, delta, c.Forward.Describe())
	}
	vec := func(jxy, jz, jj2 float64) ([]float64, error) {
		if isotropic { // jxy = jz here: Delta = 1, or the J tangent
			return CouplingVector(c.Forward, map[string]float64{CouplingJ: jxy, CouplingJ2: jj2})
		}
		return CouplingVector(c.Forward, map[string]float64{CouplingJxy: jxy, CouplingJz: jz, CouplingJ2: jj2})
	}
	cv, err := vec(j, delta*j, j2)
	if err != nil {
		return nil, nil, err
	}
	tangents := make([][]float64, len(c.Params))
	for i, par := range c.Params {
		switch par.Name {
		case ParamJ:
			tangents[i], _ = vec(1, delta, 0)
		case ParamDelta:
			tangents[i], _ = vec(0, j, 0)
		case ParamJ2:
			tangents[i], _ = vec(0, 0, 1)
		}
	}
	return cv, tangents, nil
}

// predict evaluates the candidate at parameters p on the series.
func (c *Candidate) predict(series []*Series, p []float64) (*prediction, error) {
	cv, tangents, err := c.couplingTangents(p)
	if err != nil {
		return nil, err
	}
	var tIdx []int // parameter index of each requested tangent
	var req [][]float64
	for i, t := range tangents {
		if t != nil && !c.Params[i].Fixed {
			tIdx = append(tIdx, i)
			req = append(req, t)
		}
	}
	pr := &prediction{
		value:       make([][]float64, len(series)),
		jac:         make([][][]float64, len(series)),
		trusted:     make([][]bool, len(series)),
		trustedFrom: make([]float64, len(series)),
	}
	var temps []float64
	for _, s := range series {
		if s.Quantity != Magnetization {
			for _, pt := range s.Points {
				temps = append(temps, pt.T)
			}
		}
	}
	slices.Sort(temps)
	temps = slices.Compact(temps)
	var zero *Curves
	if len(temps) > 0 {
		if zero, err = c.Forward.Curves(Request{Couplings: cv, Temps: temps, Tangents: req}); err != nil {
			return nil, err
		}
	}
	mag, err := c.magnetizationGrid(series, cv, req, p)
	if err != nil {
		return nil, err
	}
	for si, s := range series {
		pr.value[si] = make([]float64, len(s.Points))
		pr.jac[si] = make([][]float64, len(s.Points))
		pr.trusted[si] = make([]bool, len(s.Points))
		pr.trustedFrom[si] = math.NaN()
		for k, pt := range s.Points {
			pr.jac[si][k] = make([]float64, len(p))
			var ok bool
			switch s.Quantity {
			case Susceptibility, HeatCapacity:
				i, _ := slices.BinarySearch(temps, pt.T)
				ok = c.zeroFieldPoint(s.Quantity, zero, i, p, tIdx, &pr.value[si][k], pr.jac[si][k])
				pr.trustedFrom[si] = curveOf(zero, s.Quantity).TrustedFrom
			case Magnetization:
				ok = c.magnetizationPoint(pt, mag.at(pt, c.value(p, ParamG, 2)), p, tIdx, &pr.value[si][k], pr.jac[si][k])
			}
			pr.trusted[si][k] = ok
		}
	}
	return pr, nil
}

// curveOf returns the per-site curve a zero-field quantity is built on.
func curveOf(c *Curves, q Quantity) *Curve {
	if q == HeatCapacity {
		return &c.HeatCapacity
	}
	return &c.Susceptibility
}

// zeroFieldPoint fills the value and parameter derivatives of chi or C
// at grid index i and reports whether the forward model trusts it.
func (c *Candidate) zeroFieldPoint(q Quantity, cv *Curves, i int, p []float64, tIdx []int, val *float64, jac []float64) bool {
	n := c.SitesPerFormula
	t := cv.Temps[i]
	rho := c.value(p, ParamImpurity, 0)
	cur := curveOf(cv, q)
	site := cur.Value[i]
	switch q {
	case Susceptibility:
		g := c.value(p, ParamG, 2)
		u := n * g * g * MolarSusceptibilityUnit
		curie := 1 / (4 * t)
		*val = u*((1-rho)*site+rho*curie) + c.value(p, ParamChi0, 0)
		for k, pi := range tIdx {
			jac[pi] = u * (1 - rho) * cur.Deriv[k][i]
		}
		c.setJac(jac, ParamG, 2*(*val-c.value(p, ParamChi0, 0))/g)
		c.setJac(jac, ParamChi0, 1)
		c.setJac(jac, ParamImpurity, u*(curie-site))
	case HeatCapacity:
		a, b := c.value(p, ParamPhononA, 0), c.value(p, ParamPhononB, 0)
		t3 := t * t * t
		*val = n*GasConstant*(1-rho)*site + a*t3 + b*t3*t*t
		for k, pi := range tIdx {
			jac[pi] = n * GasConstant * (1 - rho) * cur.Deriv[k][i]
		}
		c.setJac(jac, ParamImpurity, -n*GasConstant*site)
		c.setJac(jac, ParamPhononA, t3)
		c.setJac(jac, ParamPhononB, t3*t*t)
	}
	return cur.Trusted(t)
}

// fieldGrid holds the forward model at every field and temperature of
// the M(H) points, from one request (curvesAtFields).
type fieldGrid struct {
	fields, temps []float64
	curves        []*Curves // [field index]
}

// magnetizationGrid evaluates the forward model at the fields g mu_B B
// and temperatures of every M(H) point of the series, or returns nil
// when there are none.
func (c *Candidate) magnetizationGrid(series []*Series, cv []float64, tangents [][]float64, p []float64) (*fieldGrid, error) {
	g := c.value(p, ParamG, 2)
	grid := &fieldGrid{}
	for _, s := range series {
		if s.Quantity != Magnetization {
			continue
		}
		for _, pt := range s.Points {
			grid.fields = append(grid.fields, g*KelvinPerTesla*pt.H)
			grid.temps = append(grid.temps, pt.T)
		}
	}
	if len(grid.temps) == 0 {
		return nil, nil
	}
	slices.Sort(grid.fields)
	grid.fields = slices.Compact(grid.fields)
	slices.Sort(grid.temps)
	grid.temps = slices.Compact(grid.temps)
	var err error
	grid.curves, err = curvesAtFields(c.Forward, Request{Couplings: cv, Temps: grid.temps, Tangents: tangents}, grid.fields)
	return grid, err
}

// fieldPoint is the forward model at one (T, h) point of a fieldGrid.
type fieldPoint struct {
	c *Curves
	i int // temperature index
}

func (g *fieldGrid) at(pt Point, gFactor float64) fieldPoint {
	f, _ := slices.BinarySearch(g.fields, gFactor*KelvinPerTesla*pt.H)
	i, _ := slices.BinarySearch(g.temps, pt.T)
	return fieldPoint{g.curves[f], i}
}

// magnetizationPoint evaluates M at one (T, H) point from the forward
// model there and reports whether the model trusts it.
func (c *Candidate) magnetizationPoint(pt Point, at fieldPoint, p []float64, tIdx []int, val *float64, jac []float64) bool {
	n := c.SitesPerFormula
	g, rho := c.value(p, ParamG, 2), c.value(p, ParamImpurity, 0)
	hPerG := KelvinPerTesla * pt.H // dh/dg
	cur, i := at.c, at.i
	m, chi := cur.Magnetization.Value[i], cur.Susceptibility.Value[i]
	x := g * hPerG / (2 * pt.T)
	free := math.Tanh(x) / 2
	sech2 := 1 - math.Tanh(x)*math.Tanh(x)
	vanVleck := 1e4 * pt.H / MuBPerFormulaUnitEmu // chi0 [emu/mol] -> M [mu_B/f.u.]; 1 T = 1e4 Oe
	*val = n*g*((1-rho)*m+rho*free) + c.value(p, ParamChi0, 0)*vanVleck
	for k, pi := range tIdx {
		jac[pi] = n * g * (1 - rho) * cur.Magnetization.Deriv[k][i]
	}
	dFree := sech2 / 2 * hPerG / (2 * pt.T)
	c.setJac(jac, ParamG, n*((1-rho)*(m+g*chi*hPerG)+rho*(free+g*dFree)))
	c.setJac(jac, ParamChi0, vanVleck)
	c.setJac(jac, ParamImpurity, n*g*(free-m))
	return cur.Magnetization.Trusted(pt.T)
}

func (c *Candidate) setJac(jac []float64, name string, v float64) {
	if i := c.ParamIndex(name); i >= 0 {
		jac[i] = v
	}
}

// Describe lists the candidate's parameters for messages.
func (c *Candidate) Describe() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s (%s;", c.Name, c.Forward.Describe())
	for _, p := range c.Params {
		fmt.Fprintf(&b, " %s", p.Name)
		if p.Fixed {
			b.WriteString("(fixed)")
		}
	}
	b.WriteString(")")
	return b.String()
}

// Predict returns the candidate's curves at its parameter values (the
// Value of each Param) at every point of the series, in the series'
// units, and whether the forward model trusts each point.
func (c *Candidate) Predict(series []*Series) (values [][]float64, trusted [][]bool, err error) {
	p := make([]float64, len(c.Params))
	for i, par := range c.Params {
		p[i] = par.Value
	}
	pr, err := c.predict(series, p)
	if err != nil {
		return nil, nil, err
	}
	return pr.value, pr.trusted, nil
}
