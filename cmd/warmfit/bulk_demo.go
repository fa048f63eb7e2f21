package main

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strconv"

	"warmfit/fit/bulk"
)

// The demo scenario of "warmfit bulk --demo": orvanite, an invented
// copper compound (one Cu2+ spin-1/2 per formula unit) whose spins form
// antiferromagnetic Heisenberg chains. Its curves are synthetic: the
// infinite chain (the expansion at order 14) where that is trusted;
// below it chi and M from an interpolation of the infinite chain
// (orvaniteChi, orvaniteM; a finite ring would show a spin gap the chain
// has not) and C from the 12-site ring of the periodic-cluster model;
// with the values below, plus Gaussian noise of the stated size from a fixed seed. The sample carries
// 1.2% free spins (a Curie tail), a diamagnetic background, and a
// lattice heat capacity that dominates C above 20 K, as real samples do.
var orvaniteTruth = map[string]float64{
	bulk.ParamJ:        27.4,    // K
	bulk.ParamG:        2.12,    //
	bulk.ParamChi0:     -9.0e-5, // emu/mol
	bulk.ParamImpurity: 0.012,
	bulk.ParamPhononA:  4.0e-4, // J/(mol K^4): a Debye temperature near 360 K for ten atoms
}

// orvaniteCurve is one synthetic data file.
type orvaniteCurve struct {
	file, header, about string
	q                   bulk.Quantity
	xs                  []float64 // temperatures, or fields for M
	temps               []float64 // M(H): one sweep per temperature
	rel, floor          float64   // noise: rel x |value| + floor, in quadrature
}

func orvaniteCurves() []orvaniteCurve {
	return []orvaniteCurve{
		{file: "orvanite_chi.csv", header: "T [K],chi [emu/mol],chi_err [emu/mol]", q: bulk.Susceptibility,
			about: "zero-field-cooled susceptibility in 0.1 T, 2-300 K", xs: logSpaced(2, 300, 70), rel: 1.5e-3, floor: 3e-6},
		{file: "orvanite_heat.csv", header: "T [K],C [J/(mol K)],C_err [J/(mol K)]", q: bulk.HeatCapacity,
			about: "relaxation calorimetry in zero field, 4-45 K", xs: logSpaced(4, 45, 40), rel: 1e-2, floor: 2e-3},
		{file: "orvanite_MH.csv", header: "T [K],H [T],M [mu_B/f.u.],M_err [mu_B/f.u.]", q: bulk.Magnetization,
			about: "magnetisation sweeps 0.5-7 T at 2 K and 20 K", xs: linSpaced(0.5, 7, 14), temps: []float64{2, 20}, rel: 5e-3, floor: 2e-4},
	}
}

func logSpaced(lo, hi float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return out
}

func linSpaced(lo, hi float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	return out
}

// runBulkDemo writes the orvanite curves into dir and fits them with
// three candidate lattices, writing fit.json, curves.csv and figures/
// there (or -o for the JSON).
func runBulkDemo(env *runEnv, dir string) error {
	if err := ensureDir(dir); err != nil {
		return err
	}
	ring, err := bulk.NewPeriodicClusterModel("chain", bulk.PeriodicClusterOptions{})
	if err != nil {
		return err
	}
	chain, err := bulk.NewExpansionModel("chain", 14, bulk.ExpansionOptions{})
	if err != nil {
		return err
	}
	fmt.Fprintf(env.Stderr, "demo: orvanite, an invented spin-1/2 chain compound (J = %g K, g = %g, %.1f%% free spins); writing its curves to %s\n",
		orvaniteTruth[bulk.ParamJ], orvaniteTruth[bulk.ParamG], 100*orvaniteTruth[bulk.ParamImpurity], dir)
	rng := rand.New(rand.NewPCG(2718, 31))
	var files []string
	for _, c := range orvaniteCurves() {
		path := filepath.Join(dir, c.file)
		if err := writeOrvaniteCurve(env, path, c, []bulk.ForwardModel{chain, ring}, rng); err != nil {
			return err
		}
		files = append(files, path)
	}
	o := &bulkOptions
	o.models = []string{"chain", "square", "honeycomb"}
	// The curves are fitted with the production model, the expansion of
	// the infinite lattice at lower orders than made them, which says
	// where it stops being trusted (the 2 K sweep and the coldest chi and
	// C points are left out, with warnings).
	o.engine = engineExpansion
	// Orders below the defaults keep the demo to about a minute: the M(H)
	// sweeps are evaluated on a trust grid of some 30 temperatures at each
	// of 14 fields.
	o.orders = map[string]int{"chain": 12, "square": 8, "honeycomb": 9}
	if o.out == "" {
		o.out = filepath.Join(dir, "fit.json")
	}
	if o.curves == "" {
		o.curves = filepath.Join(dir, "curves.csv")
	}
	if o.figures == "" {
		o.figures = filepath.Join(dir, "figures")
	}
	job, err := newBulkJob(files)
	if err != nil {
		return err
	}
	if err := job.run(env); err != nil {
		return err
	}
	fmt.Fprintf(env.Stderr, "demo: the true values were J = %g K, g = %g, chi0 = %g emu/mol, rho = %g, a = %g J/(mol K^4); results in %s, %s and %s\n",
		orvaniteTruth[bulk.ParamJ], orvaniteTruth[bulk.ParamG], orvaniteTruth[bulk.ParamChi0], orvaniteTruth[bulk.ParamImpurity], orvaniteTruth[bulk.ParamPhononA],
		o.out, o.curves, o.figures)
	return nil
}

// writeOrvaniteCurve evaluates the true model on the curve's points, from
// the first forward model that trusts each point (the last one's value
// otherwise), and writes them with noise.
func writeOrvaniteCurve(env *runEnv, path string, c orvaniteCurve, models []bulk.ForwardModel, rng *rand.Rand) error {
	s := &bulk.Series{Quantity: c.q}
	if c.q == bulk.Magnetization {
		for _, t := range c.temps {
			for _, h := range c.xs {
				s.Points = append(s.Points, bulk.Point{T: t, H: h})
			}
		}
	} else {
		for _, t := range c.xs {
			s.Points = append(s.Points, bulk.Point{T: t})
		}
	}
	vals := make([]float64, len(s.Points))
	done := make([]bool, len(s.Points))
	var expansionTrusted []bool
	for mi, fwd := range models {
		truth, err := bulk.NewCandidate("orvanite", fwd, []*bulk.Series{s}, nil, false, orvaniteTruth, nil)
		if err != nil {
			return err
		}
		v, trusted, err := truth.Predict([]*bulk.Series{s})
		if err != nil {
			return err
		}
		if mi == 0 {
			expansionTrusted = trusted[0]
		}
		for k := range vals {
			if !done[k] && (trusted[0][k] || mi == len(models)-1) {
				vals[k], done[k] = v[0][k], true
			}
		}
	}
	// A finite ring has a spin gap that the infinite chain has not, so
	// below the expansion's trusted range chi and M come from the
	// infinite-chain interpolation instead (the free spins' Curie tail
	// and Brillouin M are added the same way as in the fitted model).
	scale := 1.0
	if c.q == bulk.Susceptibility {
		scale = orvaniteChiMatch(s.Points, vals, expansionTrusted)
	}
	for k, p := range s.Points {
		switch {
		case expansionTrusted[k]:
		case c.q == bulk.Susceptibility:
			vals[k] = orvaniteChi(p.T, scale)
		case c.q == bulk.Magnetization:
			vals[k] = orvaniteM(p.T, p.H)
		}
	}
	meta := &csvMeta{Command: "bulk --demo", Contents: "one row per measured point of the invented compound orvanite"}
	meta.line("orvanite (invented compound, synthetic data from warmfit bulk --demo): %s", c.about)
	meta.line("noise: %.3g x |value| (+) %.3g, Gaussian, one standard error in the _err column", c.rel, c.floor)
	meta.set("invented", true)
	meta.set("noise_relative", c.rel)
	meta.set("noise_floor", c.floor)
	return writeCSVResult(env, path, bulkOptions.csv, meta, func(w io.Writer) error {
		fmt.Fprintln(w, c.header)
		for k, p := range s.Points {
			v := vals[k]
			sd := math.Hypot(c.rel*v, c.floor)
			noisy := v + sd*rng.NormFloat64()
			if c.q == bulk.Magnetization {
				fmt.Fprintf(w, "%s,%s,%s,%s\n", num(p.T), num(p.H), num(noisy), num(sd))
			} else {
				fmt.Fprintf(w, "%s,%s,%s\n", num(p.T), num(noisy), num(sd))
			}
		}
		return nil
	})
}

// orvaniteChi is the true chi(T) of orvanite (emu/mol) from the
// interpolation of the infinite spin-1/2 Heisenberg chain susceptibility
// in chainChiPerSite times scale, with the free-spin Curie tail
// rho/(4T) and chi0, in the form the fitted model uses
// (fit/bulk.Candidate).
func orvaniteChi(t, scale float64) float64 {
	g, rho := orvaniteTruth[bulk.ParamG], orvaniteTruth[bulk.ParamImpurity]
	u := g * g * bulk.MolarSusceptibilityUnit
	return u*((1-rho)*scale*chainChiPerSite(t, orvaniteTruth[bulk.ParamJ])+rho/(4*t)) + orvaniteTruth[bulk.ParamChi0]
}

// orvaniteChiMatch is the factor that makes the interpolation meet the
// expansion at its coldest trusted point (about 1% there), so the
// synthetic curve has no step where one takes over from the other; 1
// when the expansion trusts no point.
func orvaniteChiMatch(pts []bulk.Point, vals []float64, trusted []bool) float64 {
	k0 := -1
	for k, p := range pts {
		if trusted[k] && (k0 < 0 || p.T < pts[k0].T) {
			k0 = k
		}
	}
	if k0 < 0 {
		return 1
	}
	t := pts[k0].T
	g, rho := orvaniteTruth[bulk.ParamG], orvaniteTruth[bulk.ParamImpurity]
	u := g * g * bulk.MolarSusceptibilityUnit
	chain := (vals[k0] - orvaniteTruth[bulk.ParamChi0] - u*rho/(4*t)) / (u * (1 - rho))
	return chain / chainChiPerSite(t, orvaniteTruth[bulk.ParamJ])
}

// orvaniteM is the true M(T, H) of orvanite (mu_B per formula unit)
// where the expansion does not reach: the chain in linear response,
// <S^z> = chi_chain(T) h with h = g mu_B H / k_B (the chain is gapless,
// so this holds for h well below J, not only below T: h = 0.36 J at 7 T;
// the T = 0 curve bends up by some per cent there), plus the free spins'
// Brillouin magnetisation and chi0 H, as in fit/bulk.Candidate.
func orvaniteM(t, hTesla float64) float64 {
	g, rho := orvaniteTruth[bulk.ParamG], orvaniteTruth[bulk.ParamImpurity]
	h := g * bulk.KelvinPerTesla * hTesla
	chain := chainChiPerSite(t, orvaniteTruth[bulk.ParamJ]) * h
	free := math.Tanh(h/(2*t)) / 2
	return g*((1-rho)*chain+rho*free) + orvaniteTruth[bulk.ParamChi0]*1e4*hTesla/bulk.MuBPerFormulaUnitEmu
}

// chainChiPerSite is the susceptibility per site of the spin-1/2
// Heisenberg chain H = J sum S_i.S_{i+1}, in units of g^2 mu_B^2/k_B
// (1/K), from the rational interpolation of the Bonner–Fisher results
// (Estes et al. 1978, Hall 1981; coefficients from memory):
//
//	chi = (1/T) (0.25 + 0.074975 x + 0.075235 x^2) / (1 + 0.9931 x + 0.172135 x^2 + 0.757825 x^3),  x = J/T.
//
// It has the Curie limit 1/(4T), the maximum 0.1469/J near T = 0.641 J,
// and tends to 0.0993/J as T -> 0 (the exact value is 1/(pi^2 J),
// Griffiths 1964, approached with logarithmic corrections).
func chainChiPerSite(t, j float64) float64 {
	x := j / t
	return (0.25 + 0.074975*x + 0.075235*x*x) / (1 + 0.9931*x + 0.172135*x*x + 0.757825*x*x*x) / t
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', 7, 64) }
