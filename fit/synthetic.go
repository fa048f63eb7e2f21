package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"

	"warmfit/lattice"
)

// SyntheticComment is the comment line every synthetic table carries.
const SyntheticComment = "cross-term correlations are ignored by this generator"

// SyntheticTable simulates measuring terms with expectation values expect
// (exact or from the expansion) under a bases scheme in which every basis
// gets shotsPerBasis shots; see SyntheticTableFromShots.
func SyntheticTable(terms []lattice.Term, expect []float64, bases []string, shotsPerBasis int64, seed uint64) (*Table, error) {
	if shotsPerBasis <= 0 {
		return nil, fmt.Errorf("shots per basis %d must be positive", shotsPerBasis)
	}
	if len(bases) == 0 {
		return nil, fmt.Errorf("no measurement bases")
	}
	for i, b := range bases {
		if msg := checkBasis(b, len(bases[0])); msg != "" {
			return nil, fmt.Errorf("basis %d: %s", i, msg)
		}
	}
	if err := lattice.CheckTerms(len(bases[0]), terms); err != nil {
		return nil, err
	}
	t, err := SyntheticTableFromShots(terms, expect, ShotsPerTerm(bases, shotsPerBasis, terms), seed)
	if err != nil {
		return nil, err
	}
	t.Comments = append(t.Comments, fmt.Sprintf("scheme: %d bases x %d shots", len(bases), shotsPerBasis))
	return t, nil
}

// SyntheticTableFromShots simulates measuring term k N_k = shots[k] times
// in a state where it has expectation expect[k], for arrays too large to
// sample whole snapshots. The estimate is (2 B - N_k)/N_k with B an exact
// Binomial(N_k, (1 + e_k)/2) draw (the number of +1 outcomes), each term
// independent, all from one PCG stream seeded with seed (deterministic).
//
// The standard error is computed from the drawn estimate, not from e_k,
// by the same rule as SnapshotEstimator (sample variance (1 - v²)/(N - 1),
// floored by the uniform-prior posterior variance): an analysis of real
// data only knows the estimate, and error bars from the truth would hide
// the noise in the error bars themselves (and vanish when e_k = ±1).
//
// Real snapshots correlate estimates that share shots; this generator
// does not, and says so in its comment lines. A "shots" column holds N_k.
// Terms with fewer than two shots, non-finite expectations or
// expectations outside [-1, 1] (beyond 1e-9) are errors.
func SyntheticTableFromShots(terms []lattice.Term, expect []float64, shots []int64, seed uint64) (*Table, error) {
	if len(expect) != len(terms) || len(shots) != len(terms) {
		return nil, fmt.Errorf("%d terms but %d expectations and %d shot counts", len(terms), len(expect), len(shots))
	}
	var few []int
	for k, e := range expect {
		if math.IsNaN(e) || math.Abs(e) > 1+rangeSlack {
			return nil, fmt.Errorf("term %d (%s): expectation %v is not in [-1, 1]", k, terms[k].Key(), e)
		}
		if shots[k] < minShots {
			few = append(few, k)
		}
	}
	if len(few) > 0 {
		probe := newEstimates(len(terms))
		err := probe.markMissing(terms, few, nil, func(k int) string { return fmt.Sprintf("%d shots", shots[k]) }, "use more bases or a scheme that measures every term (covering)")
		return nil, fmt.Errorf("bases scheme too thin: %w", err)
	}
	rng := rand.New(rand.NewPCG(seed, 0xda3e39cb94b95bdb))
	t := &Table{
		Comments: []string{
			fmt.Sprintf("synthetic data: term k is estimated from N_k independent shots, +1 with probability (1 + e_k)/2 (exact binomial draws, seed %d)", seed),
			SyntheticComment,
		},
		ExtraHeader: []string{"shots"},
		Rows:        make([]Row, len(terms)),
	}
	for k, term := range terms {
		e := max(-1, min(1, expect[k]))
		n := shots[k]
		plus := binomial(rng, n, (1+e)/2)
		sum := 2*plus - n
		t.Rows[k] = Row{
			Pauli:     term.Pauli,
			Sites:     slices.Clone(term.Sites),
			Value:     float64(sum) / float64(n),
			Stderr:    math.Sqrt(shotVariance(sum, n)),
			HasStderr: true,
			Extra:     []string{strconv.FormatInt(n, 10)},
		}
	}
	return t, nil
}
