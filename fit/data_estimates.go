package fit

import (
	"errors"
	"fmt"
	"math"
	"os"
	"slices"
	"strings"

	"warmfit/cluster"
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
	Cov     *cluster.SparseSym
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
		r := Row{Pauli: term.Pauli, Sites: slices.Clone(term.Sites), Value: e.Values[k], Stderr: e.Stderr[k], HasStderr: e.Stderr[k] > 0}
		if withShots {
			r.Extra = []string{fmt.Sprint(e.Shots[k])}
		}
		t.Rows = append(t.Rows, r)
	}
	return t
}

// EstimatesFromTable looks up every term in an expectation table. Exact
// rows (stderr "exact") get standard error zero. The covariance is
// diagonal: a table carries no correlations. Terms absent from the table
// are an error (listing them) unless allowMissing holds their index;
// the indices of unused table rows are returned so callers can report
// them.
func EstimatesFromTable(t *Table, terms []lattice.Term, allowMissing []int) (est *Estimates, unused []int, err error) {
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
	if err := est.markMissing(terms, absent, allowMissing, func(int) string { return "not in the table" }, "add rows for them to the table"); err != nil {
		return nil, nil, err
	}
	for i, u := range used {
		if !u {
			unused = append(unused, i)
		}
	}
	return est, unused, nil
}

func newEstimates(n int) *Estimates {
	return &Estimates{
		Values: make([]float64, n),
		Stderr: make([]float64, n),
		Shots:  make([]int64, n),
		Cov:    cluster.NewSparseSym(n),
	}
}

// markMissing sets the estimates of terms without data to NaN, or
// returns an error listing the first ten such terms not allowed to be
// missing, with why(k) saying what is wrong with term k.
func (e *Estimates) markMissing(terms []lattice.Term, absent, allowMissing []int, why func(k int) string, remedy string) error {
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
		return fmt.Errorf("%d of %d terms (%s) have no usable data: %s. What to do: %s; or drop them from the template; or give each a \"group\" shared with measured terms, so that the fit determines them through it",
			len(bad), len(terms), countByPauli(terms, bad), msg, remedy)
	}
	for _, k := range absent {
		e.Values[k], e.Stderr[k], e.Shots[k] = math.NaN(), math.NaN(), 0
	}
	e.Missing = absent
	return nil
}

// countByPauli says which kinds of term the listed ones are ("12 YY, 9 Y"),
// longer strings first: a whole kind missing usually means a basis is.
func countByPauli(terms []lattice.Term, list []int) string {
	count := map[string]int{}
	var order []string
	for _, k := range list {
		p := terms[k].Pauli
		if count[p] == 0 {
			order = append(order, p)
		}
		count[p]++
	}
	slices.SortStableFunc(order, func(a, b string) int {
		if len(a) != len(b) {
			return len(b) - len(a)
		}
		return strings.Compare(a, b)
	})
	parts := make([]string, len(order))
	for i, p := range order {
		parts[i] = fmt.Sprintf("%d %s", count[p], p)
	}
	return strings.Join(parts, ", ")
}

// DataSummary describes data read by LoadEstimates, for reports.
type DataSummary struct {
	Kind     DataKind // KindTable or KindSnapshots
	Rows     int      // rows of an expectation table
	Shots    int64    // shots of a snapshot file
	Comments []string // comment lines of a table
}

// LoadEstimates reads an expectation table or a snapshot file (told apart
// by DetectDataKind) and returns estimates aligned with terms, a template
// on lat. For a table the covariance is diagonal. opt.Neighbors defaults
// to lat's neighbours.
//
// A term may lack data when opt.AllowMissing lists it, or when it shares
// its group with a measured term (GroupedMissing): the fit then
// determines it through the group. Table rows that match no term are an
// error naming their line: either a site beyond the lattice or a term
// the template does not have.
func LoadEstimates(path string, lat *lattice.Lattice, terms []lattice.Term, opt CovarianceOptions) (*Estimates, *DataSummary, error) {
	kind, err := DetectDataKind(path)
	if err != nil {
		return nil, nil, err
	}
	if opt.Neighbors == nil {
		opt.Neighbors = lat.Neighbors
	}
	sum := &DataSummary{Kind: kind}
	if kind == KindTable {
		t, err := ReadTableFile(path)
		if err != nil {
			return nil, nil, err
		}
		// A site beyond the lattice is a mistake whatever else is wrong,
		// and it explains terms "without data": say it first.
		if err := sitesBeyondError(path, lat, t); err != nil {
			return nil, nil, err
		}
		if err := untrustedExactError(path, t); err != nil {
			return nil, nil, err
		}
		index := t.Index()
		allow := append(GroupedMissing(terms, func(k int) bool {
			_, ok := index[terms[k].Key()]
			return ok
		}), opt.AllowMissing...)
		est, unused, err := EstimatesFromTable(t, terms, allow)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: %w", displayName(path), err)
		}
		if len(unused) > 0 {
			return nil, nil, unusedRowsError(path, lat, t, unused)
		}
		sum.Rows, sum.Comments = len(t.Rows), t.Comments
		return est, sum, nil
	}
	// Which terms get data is known only after counting; the fit refuses
	// any whose group ends up without a measured member.
	opt.AllowMissing = append(GroupedMissing(terms, func(int) bool { return true }), opt.AllowMissing...)
	e, err := NewSnapshotEstimator(lat.NumSites(), terms, opt)
	if err != nil {
		return nil, nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	if err := scanSnapshotBytes(f, path, lat.NumSites(), e.addBytes); err != nil {
		return nil, nil, err
	}
	est, err := e.Result()
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", displayName(path), err)
	}
	sum.Shots = e.Shots()
	return est, sum, nil
}

// GroupedMissing lists the terms that may go without data: members of a
// group of at least two terms, at least one of which has data (hasData).
// The fit determines them through that group.
func GroupedMissing(terms []lattice.Term, hasData func(k int) bool) []int {
	size := map[string]int{}
	measured := map[string]bool{}
	for k, t := range terms {
		if t.Group != "" {
			size[t.Group]++
			if hasData(k) {
				measured[t.Group] = true
			}
		}
	}
	var allow []int
	for k, t := range terms {
		if t.Group != "" && size[t.Group] > 1 && measured[t.Group] {
			allow = append(allow, k)
		}
	}
	return allow
}

// sitesBeyondError names the first table row with a site beyond the
// lattice, by file, line and field, with the lattice's size; nil when
// every row fits.
func sitesBeyondError(path string, lat *lattice.Lattice, t *Table) error {
	n := lat.NumSites()
	var lines []int
	first := -1
	for i, r := range t.Rows {
		if r.Sites[len(r.Sites)-1] >= n {
			if first < 0 {
				first = i
			}
			lines = append(lines, r.Line)
		}
	}
	if first < 0 {
		return nil
	}
	r := t.Rows[first]
	msg := fmt.Sprintf("term %s: site %d is beyond the lattice %s of the template, which has %d sites (0..%d)", r.Key(), r.Sites[len(r.Sites)-1], lat.Spec, n, n-1)
	if len(lines) > 1 {
		const show = 10
		list := make([]string, 0, show)
		for _, l := range lines[1:min(len(lines), show+1)] {
			list = append(list, fmt.Sprint(l))
		}
		more := ""
		if len(lines)-1 > show {
			more = fmt.Sprintf(" and %d more", len(lines)-1-show)
		}
		msg += fmt.Sprintf("; %d more rows lie beyond it (lines %s%s)", len(lines)-1, strings.Join(list, ", "), more)
	}
	msg += "; the data may belong to a larger lattice than the template's (check --model), or the site numbers are off"
	return dataErrorf(displayName(path), r.Line, "sites", "%s", msg)
}

// unusedRowsError names, with their lines, the first table rows that
// match no template term, saying for each whether it lies beyond the
// lattice or is missing from the template.
func unusedRowsError(path string, lat *lattice.Lattice, t *Table, unused []int) error {
	const show = 10
	n := lat.NumSites()
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %d data row(s) match no term of the template:", displayName(path), len(unused))
	beyond := false
	for _, i := range unused[:min(show, len(unused))] {
		r := t.Rows[i]
		if last := r.Sites[len(r.Sites)-1]; last >= n {
			fmt.Fprintf(&b, "\n  line %d: %s: site %d is beyond the lattice %s, which has %d sites (0..%d)", r.Line, r.Key(), last, lat.Spec, n, n-1)
			beyond = true
		} else {
			fmt.Fprintf(&b, "\n  line %d: %s is not a term of the template", r.Line, r.Key())
		}
	}
	if len(unused) > show {
		fmt.Fprintf(&b, "\n  and %d more", len(unused)-show)
	}
	b.WriteString("\nadd the missing terms to the template (coefficient 0 is fine) or drop those rows from the data")
	if beyond {
		b.WriteString("; a site beyond the lattice usually means the data belong to a larger lattice than the template's")
	}
	return errors.New(b.String())
}

// untrustedExactError refuses exact rows that their own table marks
// trusted=false (predict writes such rows when the expansion has not
// converged): the value is the expansion's prediction, not the Gibbs
// value, so fitting it as exact data would give wrong couplings with
// error bars of zero. A row whose stderr carries an uncertainty (say the
// trunc_error put there by hand) is accepted.
func untrustedExactError(path string, t *Table) error {
	col := -1
	for j, h := range t.ExtraHeader {
		if strings.EqualFold(strings.TrimSpace(h), "trusted") {
			col = j
		}
	}
	if col < 0 {
		return nil
	}
	n, first := 0, -1
	for i, r := range t.Rows {
		if r.HasStderr || col >= len(r.Extra) || !strings.EqualFold(strings.TrimSpace(r.Extra[col]), "false") {
			continue
		}
		if first < 0 {
			first = i
		}
		n++
	}
	if n == 0 {
		return nil
	}
	r := t.Rows[first]
	return dataErrorf(displayName(path), r.Line, "trusted",
		"%s is stderr %q but trusted=false (%d such rows): an untrusted expansion value is not an exact Gibbs value; "+
			"rerun predict with a higher --order (or at a higher temperature), or write each row's trunc_error in its stderr to fit it with that uncertainty",
		r.Key(), ExactStderr, n)
}
