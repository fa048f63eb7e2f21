package stationary

import (
	"fmt"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// termEstimates extracts the estimates of the terms themselves (with
// their covariances) from the estimates of sys.Strings.
func termEstimates(sys *System, est *fit.Estimates) *fit.Estimates {
	nt := len(sys.Terms())
	out := &fit.Estimates{Values: make([]float64, nt), Stderr: make([]float64, nt), Shots: make([]int64, nt), Cov: cluster.NewSparseSym(nt)}
	for k := range nt {
		j := sys.TermString[k]
		out.Values[k], out.Stderr[k], out.Shots[k] = est.Values[j], est.Stderr[j], est.Shots[j]
		for l := k; l < nt; l++ {
			if v := est.Cov.At(j, sys.TermString[l]); v != 0 {
				out.Cov.Set(k, l, v)
			}
		}
	}
	return out
}

// errorsAgainst returns the largest and the rms coefficient error.
func errorsAgainst(got, truth []float64) (worst, rms float64) {
	for k := range truth {
		d := got[k] - truth[k]
		worst = max(worst, math.Abs(d))
		rms += d * d
	}
	return worst, math.Sqrt(rms / float64(len(truth)))
}

// patchFits fits every patch (site sets of the lattice) exactly
// (expansion order = patch size, so the patch's Gibbs state is exact;
// the patch's open boundary is the approximation) and keeps each term's
// value from the patch whose centre is nearest the term's.
func patchFits(m *model.Model, data *fit.Estimates, beta float64, patches [][]int) ([]float64, error) {
	coords := m.Lattice.Coords
	centre := func(sites []int) []float64 {
		c := make([]float64, len(coords[0]))
		for _, s := range sites {
			for i, x := range coords[s] {
				c[i] += x / float64(len(sites))
			}
		}
		return c
	}
	out := make([]float64, len(m.Terms))
	bestDist := make([]float64, len(m.Terms))
	for k := range bestDist {
		bestDist[k] = math.Inf(1)
	}
	for _, sites := range patches {
		p, err := validate.CutPatch(m, sites)
		if err != nil {
			return nil, err
		}
		pt := len(p.Model.Terms)
		pe := &fit.Estimates{Values: make([]float64, pt), Stderr: make([]float64, pt), Shots: make([]int64, pt), Cov: cluster.NewSparseSym(pt)}
		for i, k := range p.Parent {
			pe.Values[i], pe.Stderr[i], pe.Shots[i] = data.Values[k], data.Stderr[k], data.Shots[k]
			for j := i; j < pt; j++ {
				if v := data.Cov.At(k, p.Parent[j]); v != 0 {
					pe.Cov.Set(i, j, v)
				}
			}
		}
		res, err := fit.Fit(&fit.Problem{Lattice: p.Model.Lattice, Terms: p.Model.Terms, Data: pe, Beta: beta}, fit.Options{Order: len(sites), SkipTruncation: true})
		if err != nil {
			return nil, err
		}
		pc := centre(sites)
		for i, k := range p.Parent {
			tc := centre(m.Terms[k].Sites)
			var dist float64
			for a := range tc {
				dist += (tc[a] - pc[a]) * (tc[a] - pc[a])
			}
			if dist < bestDist[k] {
				bestDist[k], out[k] = dist, res.Coeffs[i]
			}
		}
	}
	return out, nil
}

// tableModel is one system of the comparison table.
type tableModel struct {
	spec, preset string
	values       map[string]float64
	disorder     float64
	// patch is the shape of the independent exact patches.
	patch []int
	// largeOrder is the expansion order the tool's automatic choice
	// reaches on a large array of this kind within its work limit
	// (cluster.NewOrderPolicy, DefaultAutoWork): 6 on a 20x20 square
	// lattice (order 7 would cost 4.9e11 units, about 9 min per
	// evaluation), 8 on a 400-site chain (order 9: 6.0e10).
	largeOrder int
}

var tableModels = map[string]tableModel{
	"tfim":   {spec: "chain:%d", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, patch: []int{8}, largeOrder: 8},
	"xxz3x4": {spec: "square:3x4", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4, "hx": 0.3}, disorder: 0.2, patch: []int{3, 3}, largeOrder: 6},
	"xxz3x3": {spec: "square:3x3", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4, "hx": 0.3}, disorder: 0.2, patch: []int{2, 3}, largeOrder: 6},
}

// TestComparisonTable compares, per temperature, the stationarity method,
// the expansion's maximum-entropy fit at the order a large array affords
// (tableModel.largeOrder; on these small lattices a higher order would be
// exact, which says nothing about large arrays) and independent exact
// fits of patches, all from the same exact snapshots (validate's sampler,
// dense ED) of a disordered model. Rerun with
//
//	WARMFIT_STATIONARY_TABLE=1 go test -run TestComparisonTable -v -timeout 60m ./fit/stationary/
//
// Environment: WARMFIT_STATIONARY_TABLE_MODEL (tfim, the default, on a
// chain of WARMFIT_STATIONARY_TABLE_N sites, default 12; xxz3x4; xxz3x3),
// WARMFIT_STATIONARY_TABLE_SHOTS (shots per covering:3 basis, default
// 20000), WARMFIT_STATIONARY_TABLE_BETAS (beta x max|coeff|, default
// "1,0.5,0.3,0.1"), WARMFIT_STATIONARY_TABLE_SEEDS (default 1; errors are
// averaged, pulls pooled). Stationarity's scale: the thermal match at the
// known beta (exact evaluator) up to 10 qubits; on 12 qubits one ED takes
// minutes, so the first coefficient is calibrated instead (said in the
// table). The direction error |theta/|theta| - truth/|truth|| compares
// all three methods without a scale.
// Reference for the truth: the exact sampler; no published table exists.
func TestComparisonTable(t *testing.T) {
	if os.Getenv("WARMFIT_STATIONARY_TABLE") == "" {
		t.Skip("set WARMFIT_STATIONARY_TABLE=1 (minutes)")
	}
	name := os.Getenv("WARMFIT_STATIONARY_TABLE_MODEL")
	if name == "" {
		name = "tfim"
	}
	tm, ok := tableModels[name]
	if !ok {
		t.Fatalf("unknown WARMFIT_STATIONARY_TABLE_MODEL %q", name)
	}
	n, shots, seeds := 12, 20000, 1
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_TABLE_N")); err == nil {
		n = v
	}
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_TABLE_SHOTS")); err == nil {
		shots = v
	}
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_TABLE_SEEDS")); err == nil {
		seeds = v
	}
	xs := []float64{1, 0.5, 0.3, 0.1} // the colder, the more the table is about
	if v := os.Getenv("WARMFIT_STATIONARY_TABLE_BETAS"); v != "" {
		xs = nil
		for _, f := range strings.Split(v, ",") {
			x, err := strconv.ParseFloat(f, 64)
			if err != nil {
				t.Fatal(err)
			}
			xs = append(xs, x)
		}
	}
	spec := tm.spec
	if strings.Contains(spec, "%d") {
		spec = fmt.Sprintf(spec, n)
	}
	l, terms := testModel(t, spec, tm.preset, tm.values, tm.disorder, 5)
	n = l.NumSites()
	truth := coeffs(terms)
	maxc := 0.0
	for _, c := range truth {
		maxc = max(maxc, math.Abs(c))
	}
	sys, err := NewSystem(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	bases, _, _ := fit.SchemeBases("covering:3", n, terms, 1)
	patches, err := validate.PatchesOfShape(l, tm.patch)
	if err != nil {
		t.Fatal(err)
	}
	gaugeName := "thermal match"
	if n > 10 {
		gaugeName = "first coefficient calibrated"
	}
	var table []string
	table = append(table, fmt.Sprintf("%s %s %v disorder %.2g (max|coeff| %.3f), %d bases x %d shots, %d seed(s), full weights %v; %d coefficients, %d rows; stationarity scale: %s",
		spec, tm.preset, tm.values, tm.disorder, maxc, len(bases), shots, seeds, fullWeights, len(terms), sys.NumRows(), gaugeName))
	table = append(table, fmt.Sprintf("| beta*max|c| | stationarity max/rms, dir (pull rms; with the plain sandwich) | expansion order <= %d max/rms, dir | patches %v max/rms, dir | expansion on exact data (bias) max/rms, dir; crossover |", tm.largeOrder, tm.patch))
	table = append(table, "|---|---|---|---|---|")
	for _, x := range xs {
		beta := x / maxc
		start := time.Now()
		th, err := cluster.NewThermal(cachedSpectrum(t, "table "+name+spec, n, terms), beta)
		if err != nil {
			t.Fatal(err)
		}
		sampler := validate.NewSamplerFromThermal(th)
		var st, ex, pa [4]float64 // max, rms², direction, (stationarity) pull²
		var nst, nex, npa, pulls, plainN int
		var plain2 float64
		var order int
		var trust, stNote, exNote, paNote string
		for s := range seeds {
			est := sampleEstimates(t, sampler, sys, bases, shots, uint64(7+s))
			d, err := Solve(sys, est, Options{})
			if err == nil {
				g := Gauge{Beta: beta, Evaluate: exactEvaluator(n, terms)}
				if n > 10 {
					g = calibrateFirst(sys)
				}
				var res *Result
				res, err = Fix(sys, est, d, g, Options{})
				if err == nil {
					w, r := errorsAgainst(res.Lambda, truth)
					st[0], st[1], st[2] = st[0]+w, st[1]+r*r, st[2]+directionError(d.Theta, truthTheta(sys))
					for k := range truth {
						if se := res.StdErr[sys.Params().Of[k]]; se > 0 {
							z := (res.Lambda[k] - truth[k]) / se
							st[3] += z * z
							pulls++
						}
					}
					nst++
					// The same with the plain sandwich (noise inflation
					// kept), for the measurement of sandwichParts.
					sandwichCorrected = !sandwichCorrected
					if rp, err := Fix(sys, est, d, g, Options{}); err == nil {
						for k := range truth {
							if se := rp.StdErr[sys.Params().Of[k]]; se > 0 {
								z := (rp.Lambda[k] - truth[k]) / se
								plain2 += z * z
								plainN++
							}
						}
					}
					sandwichCorrected = !sandwichCorrected
				}
			}
			if err != nil {
				stNote = "refused: " + firstWords(err.Error(), 8)
			}
			te := termEstimates(sys, est)
			fr, err := fit.Fit(&fit.Problem{Lattice: l, Terms: slices.Clone(terms), Data: te, Beta: beta}, fit.Options{Budget: 10 * time.Minute, MaxOrder: tm.largeOrder})
			switch {
			case err != nil:
				exNote = "failed: " + firstWords(err.Error(), 8)
			case !fr.Converged:
				exNote = "not converged"
			default:
				w, r := errorsAgainst(fr.Coeffs, truth)
				ex[0], ex[1], ex[2] = ex[0]+w, ex[1]+r*r, ex[2]+directionError(fr.Coeffs, truth)
				nex++
				order = fr.Order
				if len(fr.Untrusted) > 0 {
					trust = ", untrusted"
				}
			}
			pf, err := patchFits(&model.Model{Lattice: l, Terms: slices.Clone(terms), Beta: beta}, te, beta, patches)
			if err != nil {
				paNote = "failed: " + firstWords(err.Error(), 8)
			} else {
				w, r := errorsAgainst(pf, truth)
				pa[0], pa[1], pa[2] = pa[0]+w, pa[1]+r*r, pa[2]+directionError(pf, truth)
				npa++
			}
		}
		// The expansion's bias alone: the same fit on exact term
		// expectations (the sampled standard errors as weights). Its
		// error does not shrink with shots; stationarity's does, like
		// 1/sqrt(shots), which gives the crossover.
		biasNote := ""
		{
			te := termEstimates(sys, sampleEstimates(t, sampler, sys, bases, shots, 7))
			ops, err := cluster.TermPaulis(terms)
			if err != nil {
				t.Fatal(err)
			}
			th.ExpectAll(ops, te.Values)
			fr, err := fit.Fit(&fit.Problem{Lattice: l, Terms: slices.Clone(terms), Data: te, Beta: beta}, fit.Options{Budget: 10 * time.Minute, MaxOrder: tm.largeOrder})
			switch {
			case err != nil:
				biasNote = "failed: " + firstWords(err.Error(), 8)
			case !fr.Converged:
				biasNote = "not converged"
			default:
				w, r := errorsAgainst(fr.Coeffs, truth)
				biasNote = fmt.Sprintf("%.3g/%.3g, %.3g", w, r, directionError(fr.Coeffs, truth))
				if nst > 0 && r > 0 {
					// rms error of stationarity at shots N0 falls like
					// sqrt(N0/N): equal to the bias at N0 (e_st/bias)².
					biasNote += fmt.Sprintf("; crossover ~%.2g shots/basis", float64(shots)*math.Pow(math.Sqrt(st[1]/float64(nst))/r, 2))
				}
			}
		}
		cell := func(v [4]float64, cnt int, note string) string {
			if cnt == 0 {
				return note
			}
			c := float64(cnt)
			return fmt.Sprintf("%.3g/%.3g, %.3g", v[0]/c, math.Sqrt(v[1]/c), v[2]/c)
		}
		row := fmt.Sprintf("| %.2g | %s", x, cell(st, nst, stNote))
		if pulls > 0 {
			row += fmt.Sprintf(" (%.2f", math.Sqrt(st[3]/float64(pulls)))
			if plainN > 0 {
				row += fmt.Sprintf("; plain sandwich %.2f", math.Sqrt(plain2/float64(plainN)))
			}
			row += ")"
		}
		row += " | " + cell(ex, nex, exNote)
		if nex > 0 {
			row += fmt.Sprintf(" (order %d%s)", order, trust)
		}
		row += " | " + cell(pa, npa, paNote) + " | " + biasNote + " |"
		table = append(table, row+fmt.Sprintf("   [%.0fs]", time.Since(start).Seconds()))
		t.Log(table[len(table)-1])
	}
	t.Log("\n" + strings.Join(table, "\n"))
}

func firstWords(s string, n int) string {
	w := strings.Fields(s)
	if len(w) > n {
		w = w[:n]
	}
	return strings.Join(w, " ")
}

// effectStats runs a scenario over seeds with the package's current
// weights and returns the mean direction error, the rms of the
// coefficient errors and the pull rms (gauge as given).
func effectStats(t *testing.T, sc scenario, shots, seeds int, gauge func(*System) Gauge) (dirErr, coefRMS, pullRMS float64, refused int) {
	t.Helper()
	var sum2, e2 float64
	var count, used int
	for s := range seeds {
		sys, est, d, err := sc.run(t, shots, uint64(100+s))
		if err != nil {
			refused++
			continue
		}
		res, err := Fix(sys, est, d, gauge(sys), Options{})
		if err != nil {
			refused++
			continue
		}
		used++
		truth := coeffs(sys.Terms())
		dirErr += directionError(d.Theta, truthTheta(sys))
		for k := range truth {
			diff := res.Lambda[k] - truth[k]
			e2 += diff * diff
			if res.StdErr[k] > 0 {
				sum2 += diff * diff / (res.StdErr[k] * res.StdErr[k])
				count++
			}
		}
	}
	if used == 0 {
		return math.NaN(), math.NaN(), math.NaN(), refused
	}
	return dirErr / float64(used), math.Sqrt(e2 / float64(count)), math.Sqrt(sum2 / float64(count)), refused
}

// TestWeightingEffect measures the effect of the full-covariance weights
// against per-row variances on fixed seeds (exact snapshots, dense ED
// sampler). Rerun with
//
//	WARMFIT_STATIONARY_EFFECT=1 go test -run TestWeightingEffect -v ./fit/stationary/
//
// (WARMFIT_STATIONARY_EFFECT_SEEDS sets the seeds, default 8).
func TestWeightingEffect(t *testing.T) {
	if os.Getenv("WARMFIT_STATIONARY_EFFECT") == "" {
		t.Skip("set WARMFIT_STATIONARY_EFFECT=1 (minutes)")
	}
	seeds := 8
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_EFFECT_SEEDS")); err == nil {
		seeds = v
	}
	tfim := map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}
	xxz := map[string]float64{"Jxy": 0.4, "Jz": 0.3, "hz": 0.2, "hx": 0.1}
	cases := []struct {
		sc    scenario
		shots int
		gauge string
	}{
		{scenario{name: "tfim8-0.3", spec: "chain:8", preset: "tfim", values: tfim, disorder: 0.3, beta: 0.3 / 1.3}, 20000, "cal"},
		{scenario{name: "tfim8-0.7", spec: "chain:8", preset: "tfim", values: tfim, disorder: 0.3, beta: 0.7}, 20000, "match"},
		{scenario{name: "tfim8-1", spec: "chain:8", preset: "tfim", values: tfim, disorder: 0.3, beta: 1 / 1.3}, 20000, "cal"},
		{scenario{name: "xxz3x3-1", spec: "square:3x3", preset: "xxz", values: xxz, disorder: 0.1, beta: 1}, 200000, "cal"},
		{scenario{name: "xxz3x3-0.35", spec: "square:3x3", preset: "xxz", values: xxz, disorder: 0.1, beta: 0.35}, 200000, "cal"},
		// The heavy checks' XXZ couplings (heavy_test.go) on 3x3.
		{scenario{name: "xxzh3x3-1", spec: "square:3x3", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4, "hx": 0.3}, disorder: 0.2, beta: 1 / 1.2}, 20000, "cal"},
		{scenario{name: "xxzh3x3-1-320k", spec: "square:3x3", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4, "hx": 0.3}, disorder: 0.2, beta: 1 / 1.2}, 320000, "cal"},
	}
	if f := os.Getenv("WARMFIT_STATIONARY_EFFECT_CASES"); f != "" {
		cases = slices.DeleteFunc(cases, func(c struct {
			sc    scenario
			shots int
			gauge string
		}) bool {
			return !strings.Contains(f, c.sc.name)
		})
	}
	saved := fullWeights
	defer func() { fullWeights = saved }()
	type variant struct {
		name     string
		full     bool
		pairDist int
	}
	variants := []variant{{"diag", false, 0}, {"full", true, 0}}
	if v := os.Getenv("WARMFIT_STATIONARY_EFFECT_VARIANTS"); v != "" {
		variants = nil
		// name:full:pairDist, comma separated, e.g. "full3:1:3".
		for _, f := range strings.Split(v, ",") {
			parts := strings.Split(f, ":")
			if len(parts) != 3 {
				t.Fatalf("variant %q: want name:full:pairDist", f)
			}
			pd, _ := strconv.Atoi(parts[2])
			variants = append(variants, variant{parts[0], parts[1] == "1", pd})
		}
	}
	for _, c := range cases {
		g := calibrateFirst
		if c.gauge == "match" {
			g = matchedAtBeta(c.sc.beta)
		}
		for _, v := range variants {
			fullWeights = v.full
			sc := c.sc
			sc.pairDist = v.pairDist
			start := time.Now()
			de, ce, pr, ref := effectStats(t, sc, c.shots, seeds, g)
			t.Logf("%s %d shots, %d seeds, gauge %s, variant %s (full weights %v, pair distance %d): direction error %.4g, coefficient rms error %.4g, pull rms %.3g, refused %d [%.0fs]",
				c.sc.name, c.shots, seeds, c.gauge, v.name, v.full, v.pairDist, de, ce, pr, ref, time.Since(start).Seconds())
		}
	}
}

// TestBootstrapEffect compares, on fixed seeds, the pull rms of the
// delta-method error bars with that of the parametric bootstrap
// (Bootstrap) and of the larger of the two. Rerun with
//
//	WARMFIT_STATIONARY_EFFECT=1 go test -run TestBootstrapEffect -v ./fit/stationary/
//
// (WARMFIT_STATIONARY_EFFECT_SEEDS, default 6; _CASES filters by name;
// WARMFIT_STATIONARY_BOOT the resamples, default 20).
func TestBootstrapEffect(t *testing.T) {
	if os.Getenv("WARMFIT_STATIONARY_EFFECT") == "" {
		t.Skip("set WARMFIT_STATIONARY_EFFECT=1 (minutes)")
	}
	seeds, boots := 6, 20
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_EFFECT_SEEDS")); err == nil {
		seeds = v
	}
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_BOOT")); err == nil {
		boots = v
	}
	tfim := map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}
	xxz := map[string]float64{"Jxy": 0.4, "Jz": 0.3, "hz": 0.2, "hx": 0.1}
	cases := []struct {
		sc    scenario
		shots int
	}{
		{scenario{name: "tfim8-0.3", spec: "chain:8", preset: "tfim", values: tfim, disorder: 0.3, beta: 0.3 / 1.3}, 20000},
		{scenario{name: "xxz3x3-1", spec: "square:3x3", preset: "xxz", values: xxz, disorder: 0.1, beta: 1}, 200000},
		{scenario{name: "xxz3x3-0.35", spec: "square:3x3", preset: "xxz", values: xxz, disorder: 0.1, beta: 0.35}, 200000},
	}
	f := os.Getenv("WARMFIT_STATIONARY_EFFECT_CASES")
	for _, c := range cases {
		if f != "" && !strings.Contains(f, c.sc.name) {
			continue
		}
		start := time.Now()
		var d2, b2, m2 float64
		var count, refused, weak int
		for s := range seeds {
			sys, est, d, err := c.sc.run(t, c.shots, uint64(100+s))
			if err != nil {
				refused++
				continue
			}
			g := calibrateFirst(sys)
			res, err := Fix(sys, est, d, g, Options{})
			if err != nil {
				refused++
				continue
			}
			boot, _, err := Bootstrap(sys, est, g, Options{}, boots, uint64(s))
			if err != nil {
				refused++
				continue
			}
			if d.Weak {
				weak++
			}
			truth := coeffs(sys.Terms())
			for k := range truth {
				p := sys.Params().Of[k]
				if res.StdErr[p] <= 0 || boot[p] <= 0 {
					continue
				}
				diff := res.Lambda[k] - truth[k]
				d2 += diff * diff / (res.StdErr[p] * res.StdErr[p])
				b2 += diff * diff / (boot[p] * boot[p])
				mx := max(res.StdErr[p], boot[p])
				m2 += diff * diff / (mx * mx)
				count++
			}
		}
		if count == 0 {
			t.Logf("%s: every seed refused", c.sc.name)
			continue
		}
		n := float64(count)
		t.Logf("%s %d shots, %d seeds (%d refused, %d weak), %d resamples: pull rms delta method %.3g, bootstrap %.3g, larger of the two %.3g [%.0fs]",
			c.sc.name, c.shots, seeds, refused, weak, boots, math.Sqrt(d2/n), math.Sqrt(b2/n), math.Sqrt(m2/n), time.Since(start).Seconds())
	}
}
