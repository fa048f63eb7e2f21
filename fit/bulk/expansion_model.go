package bulk

import (
	"fmt"
	"math"
	"slices"

	"warmfit/cluster"
)

// ExpansionModel is the production ForwardModel: the translation-invariant
// linked-cluster expansion of package cluster (cluster.UniformExpansion)
// on the infinite lattice, resummed, with each curve trusted down to its
// reach (cluster.Curve.ResummedReach: the bare sums of the last orders, or
// the Wynn and Euler resummations, agree within the tolerance on the whole
// way down from the highest grid temperature). Derivatives are the
// expansion's own analytic derivatives of the chosen estimate.
//
// The engine works in the same convention as this package: the couplings
// multiply Pauli strings with weight 1/4 per S.S component, and the field
// h couples to S^z = (1/2) sum Z, with M and chi per site in spin units.
type ExpansionModel struct {
	lattice   string
	z         int
	exp       *cluster.UniformExpansion
	couplings []string
	trust     cluster.TrustOptions
}

// expansionCoordination lists the coordination of the lattices the
// expansion offers.
var expansionCoordination = map[string]int{"chain": 2, "ladder": 3, "square": 4, "triangular": 6, "honeycomb": 3, "kagome": 4, "cubic": 6}

// DefaultExpansionTolerance is the trust tolerance of the expansion
// model, per site in units of the largest coupling: 1e-4 is about 0.1% of
// the susceptibility near its maximum, below the errors of good data.
const DefaultExpansionTolerance = 1e-4

// ExpansionOptions chooses the couplings and the trust of an
// ExpansionModel.
type ExpansionOptions struct {
	// J2 adds the next-nearest Heisenberg coupling CouplingJ2.
	J2 bool
	// Anisotropic offers CouplingJxy and CouplingJz (an XXZ anisotropy
	// Delta = Jz/Jxy) instead of the one Heisenberg coupling CouplingJ.
	// Isotropic models are diagonalised by total spin, with far smaller
	// blocks (cluster.UniformExpansion), so they reach higher orders.
	Anisotropic bool
	// Trust judges the curves; a zero Tolerance means
	// DefaultExpansionTolerance.
	Trust cluster.TrustOptions
}

// NewExpansionModel prepares the expansion of a lattice to the given
// order (largest cluster).
func NewExpansionModel(lattice string, order int, opt ExpansionOptions) (*ExpansionModel, error) {
	z, ok := expansionCoordination[lattice]
	if !ok {
		return nil, fmt.Errorf("bulk: the expansion offers no lattice %q", lattice)
	}
	heisenberg := func(kind int) []cluster.TemplateTerm {
		return []cluster.TemplateTerm{{Pauli: "XX", Kind: kind, Weight: 0.25}, {Pauli: "YY", Kind: kind, Weight: 0.25}, {Pauli: "ZZ", Kind: kind, Weight: 0.25}}
	}
	um := cluster.UniformModel{Lattice: lattice, Couplings: []cluster.Coupling{{Name: CouplingJ, Terms: heisenberg(0)}}}
	if opt.Anisotropic {
		um.Couplings = []cluster.Coupling{
			{Name: CouplingJxy, Terms: []cluster.TemplateTerm{{Pauli: "XX", Weight: 0.25}, {Pauli: "YY", Weight: 0.25}}},
			{Name: CouplingJz, Terms: []cluster.TemplateTerm{{Pauli: "ZZ", Weight: 0.25}}},
		}
	}
	if opt.J2 {
		um.Shells = 2
		um.Couplings = append(um.Couplings, cluster.Coupling{Name: CouplingJ2, Terms: heisenberg(1)})
	}
	var names []string
	for _, c := range um.Couplings {
		names = append(names, c.Name)
	}
	exp, err := cluster.NewUniformExpansion(um, order)
	if err != nil {
		return nil, err
	}
	trust := opt.Trust
	if trust.Tolerance == 0 {
		trust.Tolerance = DefaultExpansionTolerance
	}
	return &ExpansionModel{lattice: lattice, z: z, exp: exp, couplings: names, trust: trust}, nil
}

// Order returns the expansion order (the largest cluster).
func (m *ExpansionModel) Order() int { return m.exp.Order() }

// Lattice implements ForwardModel.
func (m *ExpansionModel) Lattice() string { return m.lattice }

// Coordination implements ForwardModel.
func (m *ExpansionModel) Coordination() int { return m.z }

// Couplings implements ForwardModel.
func (m *ExpansionModel) Couplings() []string { return slices.Clone(m.couplings) }

// Describe implements ForwardModel.
func (m *ExpansionModel) Describe() string {
	return fmt.Sprintf("linked-cluster expansion of the infinite %s lattice to order %d, resummed (Wynn, Euler), trusted where the last orders agree", m.lattice, m.exp.Order())
}

// Curves implements ForwardModel.
func (m *ExpansionModel) Curves(req Request) (*Curves, error) {
	out, err := m.CurvesAtFields(req, []float64{req.Field})
	if err != nil {
		return nil, err
	}
	return out[0], nil
}

// CurvesAtFields implements MultiFieldModel: the models conserve S^z, so
// one diagonalisation of every cluster serves all fields.
func (m *ExpansionModel) CurvesAtFields(req Request, fields []float64) ([]*Curves, error) {
	if err := checkRequest(req, len(m.couplings)); err != nil {
		return nil, err
	}
	// The engine judges trust by an absolute tolerance in the energy unit
	// of the couplings, so it runs in units of the largest coupling s:
	// Q(c, T, h) = s^a Q'(c/s, T/s, h/s) with a = 1 for E, -1 for chi and
	// 0 for the dimensionless curves.
	s := 0.0
	for _, c := range req.Couplings {
		s = max(s, math.Abs(c))
	}
	if s == 0 {
		s = 1
	}
	scaled := func(x []float64) []float64 {
		out := make([]float64, len(x))
		for i, v := range x {
			out[i] = v / s
		}
		return out
	}
	for _, h := range fields {
		if math.IsNaN(h) || math.IsInf(h, 0) {
			return nil, fmt.Errorf("bulk: field %v is not finite", h)
		}
	}
	grid, at := trustGrid(req.Temps, s)
	res, err := m.exp.Evaluate(scaled(req.Couplings), cluster.UniformOptions{
		Temperatures: scaled(grid), Fields: scaled(fields), Derivatives: len(req.Tangents) > 0})
	if err != nil {
		return nil, err
	}
	all := make([]*Curves, len(fields))
	for f := range fields {
		out, err := m.curvesOf(res, f, s, req, at)
		if err != nil {
			return nil, err
		}
		all[f] = out
	}
	return all, nil
}

// trustGrid returns the temperatures to evaluate a request on: the
// requested ones and, between them and above them up to 50 times the
// coupling scale, enough more that neighbours are at most 25% apart.
// Trust is judged on the whole grid (cluster.Curve's reach: every point
// from the top down must be trusted), because the partial sums can agree
// at low temperature for the wrong reason, every cluster frozen in its
// ground state, as in a strong field. at[i] is the grid index of
// requested temperature i.
func trustGrid(temps []float64, scale float64) (grid []float64, at []int) {
	const ratio = 1.25
	top := max(50*scale, temps[len(temps)-1])
	for i, t := range temps {
		grid = append(grid, t)
		next := top
		if i+1 < len(temps) {
			next = temps[i+1]
		}
		if next <= t*ratio {
			continue
		}
		steps := int(math.Ceil(math.Log(next/t) / math.Log(ratio)))
		for k := 1; k < steps; k++ {
			grid = append(grid, t*math.Pow(next/t, float64(k)/float64(steps)))
		}
		if i+1 == len(temps) && next > t {
			grid = append(grid, next)
		}
	}
	at = make([]int, len(temps))
	for i, k := 0, 0; i < len(temps); k++ {
		if grid[k] == temps[i] {
			at[i] = k
			i++
		}
	}
	return grid, at
}

// curvesOf converts the expansion's curves at field index f back to
// kelvin, at the grid points at of the request's temperatures.
func (m *ExpansionModel) curvesOf(res *cluster.UniformResult, f int, s float64, req Request, at []int) (*Curves, error) {
	unit := map[cluster.Quantity]float64{cluster.QuantityEnergy: s, cluster.QuantitySusceptibility: 1 / s}
	out := &Curves{Temps: slices.Clone(req.Temps)}
	for q, dst := range map[cluster.Quantity]*Curve{
		cluster.QuantityLogZ: &out.LogZ, cluster.QuantityEnergy: &out.Energy, cluster.QuantityEntropy: &out.Entropy,
		cluster.QuantityHeatCapacity: &out.HeatCapacity, cluster.QuantityMagnetization: &out.Magnetization,
		cluster.QuantitySusceptibility: &out.Susceptibility,
	} {
		cv := res.Curve(q, f, m.trust)
		u := unit[q]
		if u == 0 {
			u = 1
		}
		dst.Value = make([]float64, len(at))
		for i, k := range at {
			dst.Value[i] = u * cv.Value[k]
		}
		dst.TrustedFrom = s * cv.ResummedReach
		if len(req.Tangents) == 0 {
			continue
		}
		if cv.DValue == nil {
			return nil, fmt.Errorf("bulk: the expansion gives no derivative of the %s for these couplings", q)
		}
		dst.Deriv = make([][]float64, len(req.Tangents))
		for k, t := range req.Tangents {
			dst.Deriv[k] = make([]float64, len(req.Temps))
			for p, tp := range t {
				for i, g := range at {
					dst.Deriv[k][i] += tp * u / s * cv.DValue[p][g]
				}
			}
		}
	}
	return out, nil
}
