package fit

import (
	"errors"
	"fmt"
	"math"
	"os"
	"reflect"
	"strings"
	"testing"

	"warmfit/lattice"
)

func TestLoadEstimatesTable(t *testing.T) {
	chain := mustLattice(t, "chain:3")
	terms := []lattice.Term{
		mustTerm(t, "Z", 1), mustTerm(t, "ZX", 1, 2), mustTerm(t, "X", 2), mustTerm(t, "Y", 0),
		mustTerm(t, "Z", 0), mustTerm(t, "ZZ", 0, 1),
	}
	// The file's values, by reading it: Z1 0.5±0.01, XZ on "2 1" is ZX on
	// [1 2] 0.0625±0.02, X2 -0.125 exact; Y0 is absent.
	est, sum, err := LoadEstimates("../testdata/data/chain3_table.csv", chain, terms, CovarianceOptions{AllowMissing: []int{3}})
	if err != nil {
		t.Fatal(err)
	}
	if sum.Kind != KindTable || sum.Rows != 5 {
		t.Errorf("summary %+v", sum)
	}
	wantV := []float64{0.5, 0.0625, -0.125, math.NaN(), 0.25, 0.375}
	wantS := []float64{0.01, 0.02, 0, math.NaN(), 0.01, 0.02}
	for k := range terms {
		if !closeOrNaN(est.Values[k], wantV[k]) || !closeOrNaN(est.Stderr[k], wantS[k]) {
			t.Errorf("%s: %v ± %v", terms[k].Key(), est.Values[k], est.Stderr[k])
		}
	}
	if est.Cov.At(0, 0) != 0.01*0.01 || est.Cov.At(0, 1) != 0 || est.Cov.NNZ() != 5 {
		t.Errorf("covariance: %v %v nnz %d", est.Cov.At(0, 0), est.Cov.At(0, 1), est.Cov.NNZ())
	}
	if fmt.Sprint(est.Missing) != "[3]" {
		t.Errorf("missing %v", est.Missing)
	}
	_, _, err = LoadEstimates("../testdata/data/chain3_table.csv", chain, terms, CovarianceOptions{})
	if err == nil || !strings.Contains(err.Error(), "chain3_table.csv: 1 of 6 terms (1 Y) have no usable data: Y 0 (not in the table). What to do: add rows for them to the table") {
		t.Errorf("missing term: %v", err)
	}
	// Rows the template lacks are an error naming their lines (common
	// practice: nothing in the data is silently dropped).
	_, _, err = LoadEstimates("../testdata/data/chain3_table.csv", chain, terms[:4], CovarianceOptions{AllowMissing: []int{3}})
	if err == nil || !strings.Contains(err.Error(), "2 data row(s) match no term") ||
		!strings.Contains(err.Error(), "line 3: Z 0 is not a term of the template") || !strings.Contains(err.Error(), "line 6: ZZ 0 1") {
		t.Errorf("unused rows: %v", err)
	}
	// A site beyond the lattice says so, by file, line and field, gives
	// the lattice's size, and comes before the terms it leaves without
	// data.
	_, _, err = LoadEstimates("../testdata/data/chain3_table.csv", mustLattice(t, "chain:2"), []lattice.Term{mustTerm(t, "Z", 0)}, CovarianceOptions{})
	var de *DataError
	if !errors.As(err, &de) || de.Line != 5 || de.Field != "sites" ||
		!strings.Contains(err.Error(), `chain3_table.csv:5: field "sites": term X 2: site 2 is beyond the lattice chain:2 of the template, which has 2 sites (0..1)`) ||
		!strings.Contains(err.Error(), "1 more rows lie beyond it (lines 7)") {
		t.Errorf("beyond the lattice: %v", err)
	}
}

func TestLoadEstimatesSnapshots(t *testing.T) {
	terms := handTerms(t)[:6]
	est, sum, err := LoadEstimates("../testdata/data/hand_snapshots.csv", mustLattice(t, "chain:3"), terms, DefaultCovarianceOptions())
	if err != nil {
		t.Fatal(err)
	}
	if sum.Kind != KindSnapshots || sum.Shots != 10 {
		t.Errorf("summary %+v", sum)
	}
	// Same file as handFile: the hand-counted values of
	// TestSnapshotEstimateHandCounted.
	src, err := os.ReadFile("../testdata/data/hand_snapshots.csv")
	if err != nil {
		t.Fatal(err)
	}
	ref, err := EstimateSnapshots(strings.NewReader(string(src)), "x", 3, terms, DefaultCovarianceOptions())
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(est.Values, ref.Values) || est.Values[0] != 5.0/7 {
		t.Errorf("values %v", est.Values)
	}

	// Round trip through a table: the estimates become rows with a shots
	// column.
	tab := est.Table(terms)
	if len(tab.Rows) != 6 || tab.ExtraHeader[0] != "shots" || tab.Rows[3].Extra[0] != "6" {
		t.Errorf("table %+v", tab)
	}
	back, _, err := EstimatesFromTable(tab, terms, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back.Values, est.Values) || !reflect.DeepEqual(back.Stderr, est.Stderr) {
		t.Error("table round trip changed estimates")
	}
}
