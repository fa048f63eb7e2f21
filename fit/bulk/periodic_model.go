package bulk

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sync"
)

// PeriodicClusterOptions chooses the clusters of a PeriodicClusterModel.
type PeriodicClusterOptions struct {
	// Sites is the size of the cluster whose curves are returned and
	// CompareSites that of the smaller cluster they are checked against;
	// zero picks the two largest clusters listed for the lattice.
	Sites, CompareSites int
	// Tolerance is the relative difference between the two clusters up to
	// which a curve counts as converged in the cluster size (default 1e-3).
	Tolerance float64
}

// DefaultFiniteSizeTolerance is the default PeriodicClusterOptions.Tolerance.
const DefaultFiniteSizeTolerance = 1e-3

// PeriodicClusterModel is a ForwardModel computed by exact
// diagonalisation of a small periodic cluster of the lattice (12 sites by
// default), block by block in total S^z. Its curves approximate the
// infinite lattice where finite-size effects are small, and it judges that
// honestly: a curve is trusted down to the lowest temperature above which
// it agrees with the same curve on a smaller periodic cluster (10, 9 or 8
// sites) to Tolerance. Derivatives are analytic (Hellmann–Feynman).
//
// Spectra are cached by the direction of the couplings, so fits that move
// only the overall scale of the couplings diagonalise once.
type PeriodicClusterModel struct {
	lattice      string
	coordination int
	main, ref    *periodicCluster
	couplings    []string
	tol          float64

	mu    sync.Mutex
	cache map[string]*spinLevels
}

// NewPeriodicClusterModel returns the periodic-cluster model of a lattice
// ("chain", "square", "triangular", "honeycomb"). It offers Jxy and Jz,
// and J2 where both clusters hold the next-nearest bonds without doubling
// them.
func NewPeriodicClusterModel(lattice string, opt PeriodicClusterOptions) (*PeriodicClusterModel, error) {
	shapes, ok := clusterShapes[lattice]
	if !ok {
		return nil, fmt.Errorf("bulk: no periodic clusters for lattice %q (known: %v)", lattice, PeriodicLattices())
	}
	pick := func(n, fallback int) (supercell, error) {
		if n == 0 {
			return shapes[fallback], nil
		}
		for _, s := range shapes {
			if s.sites == n {
				return s, nil
			}
		}
		var sizes []int
		for _, s := range shapes {
			sizes = append(sizes, s.sites)
		}
		return supercell{}, fmt.Errorf("bulk: no periodic %s cluster of %d sites (have %v)", lattice, n, sizes)
	}
	mainShape, err := pick(opt.Sites, 0)
	if err != nil {
		return nil, err
	}
	refShape, err := pick(opt.CompareSites, 1)
	if err != nil {
		return nil, err
	}
	if refShape.sites == mainShape.sites {
		return nil, fmt.Errorf("bulk: the comparison cluster must differ from the main one (both %d sites)", mainShape.sites)
	}
	m := &PeriodicClusterModel{
		lattice:      lattice,
		coordination: shellTables[lattice].coordination,
		tol:          opt.Tolerance,
		cache:        map[string]*spinLevels{},
	}
	if m.tol == 0 {
		m.tol = DefaultFiniteSizeTolerance
	}
	if !(m.tol > 0) || math.IsInf(m.tol, 0) {
		return nil, fmt.Errorf("bulk: finite-size tolerance %v must be positive", opt.Tolerance)
	}
	if m.main, err = buildPeriodicCluster(lattice, mainShape); err != nil {
		return nil, err
	}
	if m.ref, err = buildPeriodicCluster(lattice, refShape); err != nil {
		return nil, err
	}
	m.couplings = []string{CouplingJxy, CouplingJz}
	if m.main.nnn != nil && m.ref.nnn != nil {
		m.couplings = append(m.couplings, CouplingJ2)
	}
	return m, nil
}

// Lattice implements ForwardModel.
func (m *PeriodicClusterModel) Lattice() string { return m.lattice }

// Coordination implements ForwardModel.
func (m *PeriodicClusterModel) Coordination() int { return m.coordination }

// Couplings implements ForwardModel.
func (m *PeriodicClusterModel) Couplings() []string { return slices.Clone(m.couplings) }

// Describe implements ForwardModel.
func (m *PeriodicClusterModel) Describe() string {
	return fmt.Sprintf("exact diagonalisation of the periodic %d-site %s cluster, trusted where it agrees with the %d-site one to %.0e",
		m.main.sites, m.lattice, m.ref.sites, m.tol)
}

// Curves implements ForwardModel.
func (m *PeriodicClusterModel) Curves(req Request) (*Curves, error) {
	if err := checkRequest(req, len(m.couplings)); err != nil {
		return nil, err
	}
	scale := 0.0
	for _, c := range req.Couplings {
		scale = max(scale, math.Abs(c))
	}
	dir := make([]float64, len(req.Couplings))
	if scale > 0 {
		for k, c := range req.Couplings {
			dir[k] = c / scale
		}
	} else {
		scale = 1
	}
	alphas, parallel := tangentsAlong(dir, req.Tangents)
	ladder := trustLadder(req.Temps, scale)
	var out, refCurves, outLadder, refLadder *Curves
	for _, pc := range []*periodicCluster{m.main, m.ref} {
		lv, err := m.levels(pc, dir, !parallel)
		if err != nil {
			return nil, err
		}
		o := tangentShifts(lv, alphas, parallel, req.Tangents)
		c := levelThermo(lv, scale, req.Field, o, pc.sites, req.Temps)
		var l *Curves
		if len(ladder) > 0 {
			l = levelThermo(lv, scale, req.Field, nil, pc.sites, ladder)
		}
		if pc == m.main {
			out, outLadder = c, l
		} else {
			refCurves, refLadder = c, l
		}
	}
	markFiniteSizeTrust(out, refCurves, outLadder, refLadder, m.tol)
	return out, nil
}

// trustLadder returns temperatures above the request, geometrically
// spaced up to 50 times the coupling scale, at which the two clusters
// must agree as well: two finite clusters can agree at low temperature
// for the wrong reason (both frozen in their gapped ground states), and
// trust must hold on the whole way down from high temperature.
func trustLadder(temps []float64, scale float64) []float64 {
	top := 50 * scale
	t := temps[len(temps)-1]
	if t >= top {
		return nil
	}
	const n = 8
	out := make([]float64, n)
	for i := range out {
		out[i] = t * math.Pow(top/t, float64(i+1)/n)
	}
	return out
}

// checkRequest refuses malformed requests (programmer or input mistakes
// that would otherwise produce NaN).
func checkRequest(req Request, nCouplings int) error {
	if len(req.Couplings) != nCouplings {
		return fmt.Errorf("bulk: %d couplings given, the model takes %d", len(req.Couplings), nCouplings)
	}
	for _, c := range append(slices.Clone(req.Couplings), req.Field) {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return errors.New("bulk: coupling or field is not finite")
		}
	}
	if len(req.Temps) == 0 {
		return errors.New("bulk: no temperatures requested")
	}
	for i, t := range req.Temps {
		if !(t > 0) || math.IsInf(t, 0) || (i > 0 && !(t > req.Temps[i-1])) {
			return fmt.Errorf("bulk: temperatures must be positive, finite and strictly increasing (got %v at index %d)", t, i)
		}
	}
	for _, t := range req.Tangents {
		if len(t) != nCouplings {
			return fmt.Errorf("bulk: tangent has %d components, the model takes %d couplings", len(t), nCouplings)
		}
	}
	return nil
}

// tangentsAlong reports whether every tangent is a multiple alpha_k of
// dir, and the multiples.
func tangentsAlong(dir []float64, tangents [][]float64) ([]float64, bool) {
	var dd float64
	for _, d := range dir {
		dd += d * d
	}
	alphas := make([]float64, len(tangents))
	for k, t := range tangents {
		if dd == 0 {
			return nil, false
		}
		var td, tt float64
		for i := range t {
			td += t[i] * dir[i]
			tt += t[i] * t[i]
		}
		alphas[k] = td / dd
		var res float64
		for i := range t {
			r := t[i] - alphas[k]*dir[i]
			res += r * r
		}
		if res > 1e-24*tt {
			return nil, false
		}
	}
	return alphas, true
}

// tangentShifts returns o[k][n], the energy shift of level n along
// tangent k: alpha_k E_n for tangents along the couplings, sum_j t_j
// <n|O_j|n> otherwise.
func tangentShifts(lv *spinLevels, alphas []float64, parallel bool, tangents [][]float64) [][]float64 {
	o := make([][]float64, len(tangents))
	for k, t := range tangents {
		o[k] = make([]float64, len(lv.energy))
		for n := range o[k] {
			if parallel {
				o[k][n] = alphas[k] * lv.energy[n]
				continue
			}
			for j, tj := range t {
				o[k][n] += tj * lv.diag[j][n]
			}
		}
	}
	return o
}

// maxCachedSpectra bounds the spectrum cache; a fit revisits few
// directions.
const maxCachedSpectra = 16

// levels returns the cached or freshly computed spectrum of the cluster
// at coupling direction dir.
func (m *PeriodicClusterModel) levels(pc *periodicCluster, dir []float64, withDiag bool) (*spinLevels, error) {
	key := fmt.Sprintf("%s %v", pc.name, dir)
	m.mu.Lock()
	defer m.mu.Unlock()
	if lv, ok := m.cache[key]; ok && (lv.diag != nil || !withDiag) {
		return lv, nil
	}
	lv, err := diagonalizeCluster(pc, couplingOperators(pc, m.couplings), dir, withDiag)
	if err != nil {
		return nil, err
	}
	if len(m.cache) >= maxCachedSpectra {
		clear(m.cache)
	}
	m.cache[key] = lv
	return lv, nil
}

// markFiniteSizeTrust sets TrustedFrom of every curve of c: the lowest
// grid temperature from which upwards c agrees with ref to tol relative
// (with an absolute floor for curves that vanish, such as m at h = 0),
// at the grid points and at every ladder point above them.
func markFiniteSizeTrust(c, ref, ladder, refLadder *Curves, tol float64) {
	curves := func(x *Curves) []*Curve {
		if x == nil {
			return make([]*Curve, 6)
		}
		return []*Curve{&x.LogZ, &x.Energy, &x.Entropy, &x.HeatCapacity, &x.Magnetization, &x.Susceptibility}
	}
	agree := func(a, b float64) bool { return math.Abs(a-b) <= tol*max(math.Abs(a), math.Abs(b))+1e-14 }
	cs, rs, ls, lr := curves(c), curves(ref), curves(ladder), curves(refLadder)
curves:
	for q := range cs {
		cs[q].TrustedFrom = noTrust
		if ls[q] != nil {
			for i := range ls[q].Value {
				if !agree(ls[q].Value[i], lr[q].Value[i]) {
					continue curves
				}
			}
		}
		a, b := cs[q].Value, rs[q].Value
		for i := len(a) - 1; i >= 0 && agree(a[i], b[i]); i-- {
			cs[q].TrustedFrom = c.Temps[i]
		}
	}
}
