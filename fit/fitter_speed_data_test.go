package fit_test

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"

	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// speedModel is the model the fit's speed is measured on (the command
// line `warmfit model --lattice SPEC --preset xxz --set
// Jxy=0.2,Jz=0.15,hz=0.4,hx=0.2 --disorder 0.05 --seed 4 --beta 0.35`):
// XXZ couplings with X and Z fields, beta max|lambda| about 0.15.
func speedModel(tb testing.TB, spec string) (*lattice.Lattice, []lattice.Term, float64) {
	tb.Helper()
	lat, err := lattice.Open(spec)
	if err != nil {
		tb.Fatal(err)
	}
	terms, _, err := model.PresetTerms(lat, "xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4, "hx": 0.2})
	if err != nil {
		tb.Fatal(err)
	}
	model.AddDisorder(terms, 0.05, 4)
	return lat, terms, 0.35
}

// speedProblem returns the fitting problem of speedModel with binomial
// data (fit.SyntheticTable, 20000 shots per covering basis, seed 1) drawn
// around the order-dataOrder expansion expectations, as `warmfit sample
// --generator binomial --shots 20000 --order dataOrder` makes them.
func speedProblem(tb testing.TB, spec string, dataOrder int) (*fit.Problem, []lattice.Term) {
	tb.Helper()
	lat, terms, beta := speedModel(tb, spec)
	vals := expansionData(tb, lat, terms, beta, dataOrder)
	for k, v := range vals {
		vals[k] = max(-1, min(1, v))
	}
	bases, err := fit.CoveringBases(lat.NumSites(), terms)
	if err != nil {
		tb.Fatal(err)
	}
	tab, err := fit.SyntheticTable(terms, vals, bases, 20000, 1)
	if err != nil {
		tb.Fatal(err)
	}
	data, _, err := fit.EstimatesFromTable(tab, template(terms), nil)
	if err != nil {
		tb.Fatal(err)
	}
	return &fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: beta}, terms
}

// referenceCase is one fit whose result is kept in
// testdata/fit_reference.csv, computed by the exact-Newton fitter of
// before the lower-order curvature (commit b4daec0); see
// TestFitMatchesReference.
type referenceCase struct {
	name      string
	spec      string
	order     int
	dataOrder int
	tie       bool // one coefficient per kind of term (model.TieUniform)
}

var referenceCases = []referenceCase{
	{"square5x5-order4", "square:5x5", 4, 5, false},
	{"square5x5-order5", "square:5x5", 5, 5, false},
	{"square4x3-order6", "square:4x3", 6, 7, false},
	{"chain12-order6", "chain:12", 6, 7, false},
	{"square6x6-tied-order5", "square:6x6", 5, 5, true},
}

// referenceProblem builds the problem of a reference case.
func referenceProblem(tb testing.TB, c referenceCase) *fit.Problem {
	tb.Helper()
	p, _ := speedProblem(tb, c.spec, c.dataOrder)
	if c.tie {
		_, params, err := model.PresetTerms(p.Lattice, "xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4, "hx": 0.2})
		if err != nil {
			tb.Fatal(err)
		}
		model.TieUniform(p.Terms, params)
	}
	return p
}

const referenceFile = "testdata/fit_reference.csv"

// TestWriteFitReference writes testdata/fit_reference.csv when
// WARMFIT_WRITE_REFERENCE is set (run it on the commit named above).
func TestWriteFitReference(t *testing.T) {
	if os.Getenv("WARMFIT_WRITE_REFERENCE") == "" {
		t.Skip("set WARMFIT_WRITE_REFERENCE=1 to rewrite " + referenceFile)
	}
	if err := os.MkdirAll(filepath.Dir(referenceFile), 0o755); err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(referenceFile)
	if err != nil {
		t.Fatal(err)
	}
	w := bufio.NewWriter(f)
	fmt.Fprintln(w, "case,term,coeff,stderr")
	for _, c := range referenceCases {
		res, err := fit.Fit(referenceProblem(t, c), fit.Options{Order: c.order})
		if err != nil || !res.Converged {
			t.Fatalf("%s: %v %+v", c.name, err, res)
		}
		for k, term := range res.Terms {
			if math.IsNaN(term.Stderr) {
				t.Fatalf("%s: no error bars", c.name)
			}
			fmt.Fprintf(w, "%s,%s,%.17g,%.17g\n", c.name, term.Key(), term.Coeff, res.ThetaStderr[res.Params.Of[k]])
		}
		t.Logf("%s: %d terms, %d evaluations, %.2fs", c.name, len(res.Terms), res.Evaluations, res.Elapsed.Seconds())
	}
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}
