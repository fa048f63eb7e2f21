package bulk

import (
	"fmt"
	"math"
	"slices"
)

// The spin model every forward model computes, in the materials
// convention (S = sigma/2, energies in kelvin, i.e. divided by k_B):
//
//	H = sum_<ij> [Jxy (S^x_i S^x_j + S^y_i S^y_j) + Jz S^z_i S^z_j]
//	  + J2 sum_<<ij>> S_i . S_j  -  h sum_i S^z_i
//
// over the nearest (<ij>) and next-nearest (<<ij>>) neighbour bonds of an
// infinite lattice, each bond counted once; J > 0 is antiferromagnetic and
// h = g mu_B B / k_B is the Zeeman field in kelvin. In Pauli operators
// S^a_i S^a_j = sigma^a_i sigma^a_j / 4 and S^z_i = sigma^z_i / 2.

// Coupling names of the linear couplings a forward model may accept.
const (
	CouplingJ   = "J"   // nearest-neighbour Heisenberg exchange, K (isotropic models)
	CouplingJxy = "Jxy" // nearest-neighbour XY exchange, K
	CouplingJz  = "Jz"  // nearest-neighbour ZZ exchange, K
	CouplingJ2  = "J2"  // next-nearest-neighbour Heisenberg exchange, K
)

// ForwardModel computes per-site thermodynamics of the spin model above
// on one lattice. Implementations must be safe for concurrent use.
type ForwardModel interface {
	// Lattice names the lattice ("chain", "square", ...).
	Lattice() string
	// Coordination is the number of nearest neighbours of a site.
	Coordination() int
	// Couplings lists the linear couplings the model accepts, in the order
	// of Request.Couplings: CouplingJ of an isotropic model, or
	// CouplingJxy and CouplingJz; CouplingJ2 in addition when offered.
	Couplings() []string
	// Curves evaluates the model; see Request and Curves.
	Curves(req Request) (*Curves, error)
	// Describe says in one line what computes the curves (for reports).
	Describe() string
}

// MultiFieldModel is a ForwardModel that evaluates many fields at once,
// as M(H) curves need: CurvesAtFields returns the curves of req at each
// of fields (req.Field is ignored), out[f] as Curves(req) would with
// Field = fields[f]. Models conserving S^z diagonalise once for all.
type MultiFieldModel interface {
	ForwardModel
	CurvesAtFields(req Request, fields []float64) ([]*Curves, error)
}

// curvesAtFields evaluates a request at several fields, in one call when
// the model offers it.
func curvesAtFields(m ForwardModel, req Request, fields []float64) ([]*Curves, error) {
	if mf, ok := m.(MultiFieldModel); ok {
		return mf.CurvesAtFields(req, fields)
	}
	out := make([]*Curves, len(fields))
	for f, h := range fields {
		r := req
		r.Field = h
		c, err := m.Curves(r)
		if err != nil {
			return nil, err
		}
		out[f] = c
	}
	return out, nil
}

// Request asks a forward model for curves.
type Request struct {
	Couplings []float64 // kelvin, in the order of ForwardModel.Couplings
	Field     float64   // h = g mu_B B / k_B in kelvin
	Temps     []float64 // kelvin, strictly increasing, positive
	// Tangents lists directions t in coupling space along which the
	// derivatives d/dc . t of every curve are wanted (nil: none). A fit
	// asks for the directions its parameters move the couplings in; a
	// tangent parallel to Couplings is cheap for models whose spectrum
	// scales with the couplings.
	Tangents [][]float64
}

// Curve is one per-site quantity on the temperature grid of a request.
type Curve struct {
	Value []float64
	// Deriv[k][i] is the derivative of Value[i] along Request.Tangents[k].
	Deriv [][]float64
	// TrustedFrom is the lowest temperature of the grid from which upwards
	// the model trusts this curve at every grid point (+Inf when it trusts
	// none): below it the value is an extrapolation.
	TrustedFrom float64
}

// Curves are per-site thermodynamic functions on the temperature grid of a
// request, in units with k_B = 1: log Z, energy <H>/N (kelvin, the Zeeman
// term included), entropy, heat capacity dE/dT, magnetisation <S^z> per
// site and susceptibility d<S^z>/dh per site (1/K), all at Request.Field.
type Curves struct {
	Temps                               []float64
	LogZ, Energy, Entropy, HeatCapacity Curve
	Magnetization, Susceptibility       Curve
}

// Trusted reports whether curve c is trusted at temperature t.
func (c *Curve) Trusted(t float64) bool { return t >= c.TrustedFrom }

// noTrust is the TrustedFrom of a curve trusted nowhere on its grid.
var noTrust = math.Inf(1)

// CouplingVector returns the couplings of m, in its order, from named
// values in kelvin; couplings not named are zero. A nonzero value of a
// coupling m does not take is an error.
func CouplingVector(m ForwardModel, values map[string]float64) ([]float64, error) {
	names := m.Couplings()
	out := make([]float64, len(names))
	for name, v := range values {
		k := slices.Index(names, name)
		if k < 0 {
			if v != 0 {
				return nil, fmt.Errorf("bulk: the %s model (%s) takes no coupling %s (it takes %v)", m.Lattice(), m.Describe(), name, names)
			}
			continue
		}
		out[k] = v
	}
	return out, nil
}
