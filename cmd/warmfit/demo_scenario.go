package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"warmfit/cmd/warmfit/internal/plot"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// The demo's scenario: a made-up calibration problem and every choice
// of the run that is not left to the library.

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
	// Order fixes the array fit's expansion order; 0 leaves it to the
	// fitter (the one order policy, cluster.OrderPolicy).
	Order int
	// Budget guards the wall time of the fit's automatic order choice.
	// It is generous so that the choice rests on the data and the work
	// estimate, not on how busy the machine is.
	Budget time.Duration
	// Patch is the side of the square patch checked against exact
	// methods.
	Patch int
	// SweepPoints bounds the inverse temperatures of the thermodynamic
	// sweep; SweepTol is its per-site truncation tolerance.
	SweepPoints int
	SweepTol    float64
	PlanTargets []float64
	Quick       bool
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
		Params:      append([]demoParam(nil), demoDesign...),
		Disorder:    0.05,
		Seed:        1,
		Beta:        0.35,
		Shots:       20000,
		Budget:      10 * time.Minute,
		Patch:       3,
		SweepPoints: 60,
		SweepTol:    1e-3,
		PlanTargets: []float64{0.05, 0.02, 0.01},
	}
}

// quickDemoScenario is the small variant for tests and a first look: a
// 4x4 array at a slightly higher temperature, where the fitter stops at
// order 5.
func quickDemoScenario() demoScenario {
	s := defaultDemoScenario()
	s.Width, s.Height = 4, 4
	s.Beta = 0.25
	s.SweepPoints = 50
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

// maxDesignCoeff bounds |coefficient| over the device: the largest design
// value plus the disorder width.
func (s *demoScenario) maxDesignCoeff() float64 {
	m := 0.0
	for _, p := range s.Params {
		m = math.Max(m, math.Abs(p.Value))
	}
	return m + s.Disorder
}

// designModel is what the lab knows before the fit: the lattice, the
// terms the device can have at their design values, and beta, as
// "warmfit model --preset xxz --set ... --beta B" writes it.
func (s *demoScenario) designModel() (*model.Model, error) {
	l, err := lattice.Open(s.latticeSpec())
	if err != nil {
		return nil, err
	}
	values := make(map[string]float64, len(s.Params))
	for _, p := range s.Params {
		values[p.Name] = p.Value
	}
	terms, _, err := model.PresetTerms(l, "xxz", values)
	if err != nil {
		return nil, err
	}
	return &model.Model{Lattice: l, Terms: terms, Beta: s.Beta}, nil
}

// buildDevice is the design model with the seeded disorder added, as
// "warmfit model ... --disorder W --seed S" writes it.
func (s *demoScenario) buildDevice() (*model.Model, error) {
	m, err := s.designModel()
	if err != nil {
		return nil, err
	}
	if s.Disorder > 0 {
		model.AddDisorder(m.Terms, s.Disorder, s.Seed)
	}
	return m, nil
}

// dataNoise is the typical statistical error of one measured
// expectation: the shot noise sqrt((1 - e^2)/N) of a +-1 outcome with e
// near 0 (the state is weakly polarised at high temperature) and N the
// shots per basis (every term here is served by one basis).
func (s *demoScenario) dataNoise() float64 { return 1 / math.Sqrt(float64(s.Shots)) }

// dataTol is the truncation error the synthetic data and the exact
// cross-check allow an expectation value: a tenth of its shot noise, the
// fraction the fitter allows its own truncation (fit.Options).
func (s *demoScenario) dataTol() float64 { return 0.1 * s.dataNoise() }

// patchSites returns the sites of the checked patch: of the Patch x Patch
// boxes of the array, the one nearest its middle (the first of equals),
// so that the patch sees bulk couplings.
func (s *demoScenario) patchSites(l *lattice.Lattice) ([]int, error) {
	boxes, err := validate.PatchesOfShape(l, []int{s.Patch, s.Patch})
	if err != nil {
		return nil, err
	}
	centre := func(sites []int) (x, y float64) {
		for _, i := range sites {
			x += l.Coords[i][0]
			y += l.Coords[i][1]
		}
		return x / float64(len(sites)), y / float64(len(sites))
	}
	all := make([]int, l.NumSites())
	for i := range all {
		all[i] = i
	}
	cx, cy := centre(all)
	best, bestDist := 0, math.Inf(1)
	for b, sites := range boxes {
		x, y := centre(sites)
		if d := math.Hypot(x-cx, y-cy); d < bestDist-1e-9 {
			best, bestDist = b, d
		}
	}
	return boxes[best], nil
}

// sweepGrid returns the thermodynamic sweep's grid, LO..HI with points
// evenly spaced values: from one step up to about four times the
// operating beta, far enough to see the series fail, in a round step
// that gives at most SweepPoints temperatures.
func (s *demoScenario) sweepGrid() (lo, hi float64, points int) {
	span := 4 * s.Beta
	step := plot.NiceStep(span, s.SweepPoints)
	points = int(math.Ceil(span/step - 1e-9))
	// The ends are the numbers the command line in the report prints
	// (56 x 0.025 is 1.4, not 1.4000000000000001), so that the command
	// sweeps the same grid.
	printed := func(v float64) float64 { p, _ := strconv.ParseFloat(fmtFloat(v), 64); return p }
	return printed(step), printed(float64(points) * step), points
}

// sweepBetas are the inverse temperatures of "warmfit sweep --beta-grid
// LO..HI --points N": N evenly spaced values, both ends included.
func (s *demoScenario) sweepBetas() []float64 {
	lo, hi, n := s.sweepGrid()
	return betaGrid(lo, hi, n)
}
