package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// demoParam is one design value of the device Hamiltonian (a parameter of
// the xxz preset).
type demoParam struct {
	Name  string
	Value float64
	Doc   string
}

// demoScenario is the made-up calibration problem the demo solves: an
// analog quantum simulator, a square array of coupled qubits whose
// couplings and fields scatter around their design values, held at an
// effective temperature. Only the demo knows the true coefficients.
type demoScenario struct {
	Width, Height int
	Params        []demoParam
	Disorder      float64 // every coefficient shifted uniformly in [-Disorder, Disorder)
	Seed          uint64
	Beta          float64
	Shots         int64 // per measurement basis
	// DataOrder is the expansion order of the expectation values behind
	// the synthetic data of the whole array.
	DataOrder int
	// Order is the fit's expansion order; 0 lets the fitter choose.
	Order int
	// MaxOrder caps the fitter's automatic choice (the cost grows about
	// tenfold per order on the square lattice).
	MaxOrder int
	// Budget is the wall time the automatic order choice may spend. It is
	// generous so that the choice depends on the data, not on how busy
	// the machine is.
	Budget time.Duration
	// Patch is the side of the square patch checked against exact
	// methods.
	Patch int
	// Thermo grid: ThermoPoints inverse temperatures from ThermoMax/N to
	// ThermoMax.
	ThermoMax    float64
	ThermoPoints int
	ThermoTol    float64 // per-site truncation tolerance of the scan
	PlanTargets  []float64
	Quick        bool
}

// The design values. Couplings are deliberately weaker than the fields:
// on the square lattice the fitter's truncation target (a tenth of the
// statistical error, about 2e-3 here at 2e4 shots per basis) is met at
// order 6 only while beta*J stays below about 0.1; measured on this device
// at order 6, the largest change of a coefficient between orders is 4e-4
// at beta 0.3, 8e-4 at 0.35, 2.2e-3 (over target) at 0.45. Order 7 costs
// minutes, so the default beta is 0.35, where beta*max|coeff| is about 0.19.
var demoDesign = []demoParam{
	{"Jxy", 0.2, "XX and YY exchange on every bond"},
	{"Jz", 0.12, "ZZ coupling on every bond"},
	{"hz", 0.5, "Z field (qubit detuning) on every site"},
	{"hx", 0.2, "X field (drive) on every site"},
}

func defaultDemoScenario() demoScenario {
	return demoScenario{
		Width: 6, Height: 6,
		Params:       append([]demoParam(nil), demoDesign...),
		Disorder:     0.05,
		Seed:         1,
		Beta:         0.35,
		Shots:        20000,
		DataOrder:    6,
		MaxOrder:     6,
		Budget:       10 * time.Minute,
		Patch:        3,
		ThermoPoints: 40,
		ThermoTol:    1e-3,
		PlanTargets:  []float64{0.05, 0.02, 0.01},
	}
}

// quickDemoScenario is the small variant for tests and a first look: a
// 4x4 array, fit orders capped at 5 and a slightly higher temperature, at
// which order 5 meets the fitter's truncation target. The data come from
// order 6, so that the array comparison includes the truncation.
func quickDemoScenario() demoScenario {
	s := defaultDemoScenario()
	s.Width, s.Height = 4, 4
	s.Beta = 0.25
	s.DataOrder = 6
	s.MaxOrder = 5
	s.ThermoPoints = 24
	s.Quick = true
	return s
}

// parseDemoSize reads "WxH" (or a single number for a square array).
func parseDemoSize(s string) (w, h int, err error) {
	parts := strings.Split(strings.ToLower(strings.TrimSpace(s)), "x")
	if len(parts) == 1 {
		parts = append(parts, parts[0])
	}
	if len(parts) != 2 {
		return 0, 0, usagef("--size %q: want LxL, for example 6x6", s)
	}
	w, errW := strconv.Atoi(parts[0])
	h, errH := strconv.Atoi(parts[1])
	if errW != nil || errH != nil {
		return 0, 0, usagef("--size %q: want LxL with whole numbers, for example 6x6", s)
	}
	if w < 3 || h < 3 {
		return 0, 0, usagef("--size %q: the array must be at least 3x3 (the exact cross-check uses a 3x3 patch)", s)
	}
	if w*h > 10000 {
		return 0, 0, usagef("--size %q: %d qubits is more than the demo is meant for (at most 10000)", s, w*h)
	}
	return w, h, nil
}

func (s *demoScenario) latticeSpec() string { return fmt.Sprintf("square:%dx%d", s.Width, s.Height) }

func (s *demoScenario) numSites() int { return s.Width * s.Height }

// setFlag is the --set argument of "warmfit model" for the design values.
func (s *demoScenario) setFlag() string {
	parts := make([]string, len(s.Params))
	for i, p := range s.Params {
		parts[i] = p.Name + "=" + strconv.FormatFloat(p.Value, 'g', -1, 64)
	}
	return strings.Join(parts, ",")
}

func (s *demoScenario) values() map[string]float64 {
	v := make(map[string]float64, len(s.Params))
	for _, p := range s.Params {
		v[p.Name] = p.Value
	}
	return v
}

// maxDesignCoeff bounds |coefficient| over the device: the largest design
// value plus the disorder width.
func (s *demoScenario) maxDesignCoeff() float64 {
	m := 0.0
	for _, p := range s.Params {
		m = math.Max(m, math.Abs(p.Value))
	}
	return m + s.Disorder
}

// buildDevice lays the design Hamiltonian on the array and adds the
// seeded disorder, exactly as "warmfit model --preset xxz --set ...
// --disorder W --seed S --beta B" does, so that the command in the report
// writes the same file.
func (s *demoScenario) buildDevice() (*model.Model, error) {
	l, err := lattice.Open(s.latticeSpec())
	if err != nil {
		return nil, err
	}
	terms, _, err := model.PresetTerms(l, "xxz", s.values())
	if err != nil {
		return nil, err
	}
	if s.Disorder > 0 {
		model.AddDisorder(terms, s.Disorder, s.Seed)
	}
	return &model.Model{Lattice: l, Terms: terms, Beta: s.Beta}, nil
}

// demoTemplate is what the lab knows before the fit: the lattice, which
// terms the device can have, and beta; every coefficient is 0.
func demoTemplate(m *model.Model) *model.Model {
	terms := make([]lattice.Term, len(m.Terms))
	for k, t := range m.Terms {
		terms[k] = lattice.Term{Pauli: t.Pauli, Sites: append([]int(nil), t.Sites...)}
	}
	return &model.Model{Lattice: m.Lattice, Terms: terms, Beta: m.Beta}
}

// patchOrigin is the lower-left corner of the checked patch: the middle
// of the array, so that it sees bulk couplings.
func (s *demoScenario) patchOrigin() (x0, y0 int) {
	return (s.Width - s.Patch) / 2, (s.Height - s.Patch) / 2
}

// patchSites returns, for each patch site (x fastest), its index in the
// array.
func (s *demoScenario) patchSites() []int {
	x0, y0 := s.patchOrigin()
	out := make([]int, 0, s.Patch*s.Patch)
	for y := 0; y < s.Patch; y++ {
		for x := 0; x < s.Patch; x++ {
			out = append(out, (x0+x)+s.Width*(y0+y))
		}
	}
	return out
}

// extractPatch cuts the patch out of the device: the terms whose support
// lies inside it, renumbered onto an open square lattice of the patch's
// size. Array site i maps to patch site local[i].
func (s *demoScenario) extractPatch(device *model.Model) (*model.Model, error) {
	l, err := lattice.Open(fmt.Sprintf("square:%dx%d", s.Patch, s.Patch))
	if err != nil {
		return nil, err
	}
	local := map[int]int{}
	for i, site := range s.patchSites() {
		local[site] = i
	}
	var terms []lattice.Term
	for _, t := range device.Terms {
		sites := make([]int, len(t.Sites))
		inside := true
		for j, site := range t.Sites {
			p, ok := local[site]
			if !ok {
				inside = false
				break
			}
			sites[j] = p
		}
		if !inside {
			continue
		}
		nt, err := lattice.NewTerm(t.Pauli, sites, t.Coeff)
		if err != nil {
			return nil, err
		}
		terms = append(terms, nt)
	}
	m := &model.Model{Lattice: l, Terms: terms, Beta: device.Beta}
	if err := m.Validate(); err != nil {
		return nil, fmt.Errorf("patch model: %v", err)
	}
	return m, nil
}

// thermoGrid is the --beta-range argument of the scan.
func (s *demoScenario) thermoRange() string {
	lo := s.ThermoMax / float64(s.ThermoPoints)
	return strconv.FormatFloat(lo, 'g', 6, 64) + ":" + strconv.FormatFloat(s.ThermoMax, 'g', 6, 64) + ":" + strconv.Itoa(s.ThermoPoints)
}
