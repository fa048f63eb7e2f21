package fit

import (
	"fmt"
	"math"
	"os"
	"slices"
	"strings"

	"warmfit/lattice"
)

// Estimates are measured expectation values of a list of terms, aligned
// with that list, and their covariance.
//
// Terms in Missing had no usable data (allowed by
// CovarianceOptions.AllowMissing): their Values and Stderr are NaN, their
// Shots zero and Cov has no entries for them; callers must skip them.
// Every other entry is finite.
type Estimates struct {
	Values []float64
	Stderr []float64
	// Shots counts the shots behind each estimate; zero for values read
	// from an expectation table.
	Shots []int64
	// Cov is the covariance matrix of Values: Stderr² on the diagonal and
	// the kept covariances off it (see CovarianceOptions).
	Cov     *SparseSym
	Missing []int
}

// Table returns the estimates as an expectation table, one row per term
// with data (missing terms are left out), with a "shots" column when any
// estimate comes from shots.
func (e *Estimates) Table(terms []lattice.Term) *Table {
	if len(terms) != len(e.Values) {
		panic(fmt.Sprintf("fit: Estimates.Table: %d terms for %d estimates", len(terms), len(e.Values)))
	}
	missing := make(map[int]bool, len(e.Missing))
	for _, k := range e.Missing {
		missing[k] = true
	}
	withShots := slices.ContainsFunc(e.Shots, func(s int64) bool { return s > 0 })
	t := &Table{}
	if withShots {
		t.ExtraHeader = []string{"shots"}
	}
	for k, term := range terms {
		if missing[k] {
			continue
		}
		r := Row{Pauli: term.Pauli, Sites: slices.Clone(term.Sites), Value: e.Values[k], Stderr: e.Stderr[k], HasStderr: true}
		if withShots {
			r.Extra = []string{fmt.Sprint(e.Shots[k])}
		}
		t.Rows = append(t.Rows, r)
	}
	return t
}

// EstimatesFromTable looks up every term in an expectation table. Exact
// rows (empty stderr) get standard error zero. The covariance is
// diagonal: a table carries no correlations. Terms absent from the table
// are an error (listing them) unless allowMissing holds their index;
// unused table rows are returned by key so callers can report them.
func EstimatesFromTable(t *Table, terms []lattice.Term, allowMissing []int) (est *Estimates, unused []string, err error) {
	index := t.Index()
	used := make([]bool, len(t.Rows))
	est = newEstimates(len(terms))
	var absent []int
	for k, term := range terms {
		i, ok := index[term.Key()]
		if !ok {
			absent = append(absent, k)
			continue
		}
		used[i] = true
		r := t.Rows[i]
		est.Values[k] = r.Value
		if r.HasStderr {
			est.Stderr[k] = r.Stderr
		}
		est.Cov.Set(k, k, est.Stderr[k]*est.Stderr[k])
	}
	if err := est.markMissing(terms, absent, allowMissing, func(int) string { return "not in the table" }); err != nil {
		return nil, nil, err
	}
	for i, u := range used {
		if !u {
			unused = append(unused, t.Rows[i].Key())
		}
	}
	return est, unused, nil
}

func newEstimates(n int) *Estimates {
	return &Estimates{
		Values: make([]float64, n),
		Stderr: make([]float64, n),
		Shots:  make([]int64, n),
		Cov:    NewSparseSym(n),
	}
}

// markMissing sets the estimates of terms without data to NaN, or
// returns an error listing the first ten such terms not allowed to be
// missing, with why(k) saying what is wrong with term k.
func (e *Estimates) markMissing(terms []lattice.Term, absent, allowMissing []int, why func(k int) string) error {
	allowed := make(map[int]bool, len(allowMissing))
	for _, k := range allowMissing {
		allowed[k] = true
	}
	var bad []int
	for _, k := range absent {
		if !allowed[k] {
			bad = append(bad, k)
		}
	}
	if len(bad) > 0 {
		const show = 10
		parts := make([]string, 0, show)
		for _, k := range bad[:min(show, len(bad))] {
			parts = append(parts, fmt.Sprintf("%s (%s)", terms[k].Key(), why(k)))
		}
		msg := strings.Join(parts, "; ")
		if len(bad) > show {
			msg += fmt.Sprintf("; and %d more", len(bad)-show)
		}
		return fmt.Errorf("%d of %d terms have no usable data: %s", len(bad), len(terms), msg)
	}
	for _, k := range absent {
		e.Values[k], e.Stderr[k], e.Shots[k] = math.NaN(), math.NaN(), 0
	}
	e.Missing = absent
	return nil
}

// DataSummary describes data read by LoadEstimates, for reports.
type DataSummary struct {
	Kind     string   // KindTable or KindSnapshots
	Rows     int      // rows of an expectation table
	Shots    int64    // shots of a snapshot file
	Unused   []string // table rows matching no term, by term key
	Comments []string // comment lines of a table
}

// LoadEstimates reads an expectation table or a snapshot file (told apart
// by DetectDataKind) and returns estimates for terms on n qubits. For a
// table the covariance is diagonal and opt only supplies AllowMissing.
func LoadEstimates(path string, n int, terms []lattice.Term, opt CovarianceOptions) (*Estimates, *DataSummary, error) {
	kind, err := DetectDataKind(path)
	if err != nil {
		return nil, nil, err
	}
	sum := &DataSummary{Kind: kind}
	if kind == KindTable {
		t, err := ReadTableFile(path)
		if err != nil {
			return nil, nil, err
		}
		est, unused, err := EstimatesFromTable(t, terms, opt.AllowMissing)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: %w", path, err)
		}
		sum.Rows, sum.Unused, sum.Comments = len(t.Rows), unused, t.Comments
		return est, sum, nil
	}
	e, err := NewSnapshotEstimator(n, terms, opt)
	if err != nil {
		return nil, nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	if err := scanSnapshotBytes(f, path, n, e.addBytes); err != nil {
		return nil, nil, err
	}
	est, err := e.Result()
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	sum.Shots = e.Shots()
	return est, sum, nil
}
