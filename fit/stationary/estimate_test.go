package stationary

import (
	"bytes"
	"testing"

	"warmfit/fit"
	"warmfit/validate"
)

// TestEstimatesFromTable: a table listing the needed correlators (exact
// values from dense ED, written and read back through fit's table
// format) gives the true direction; a string the table lacks drops the
// rows that use it, and Solve reports how many.
func TestEstimatesFromTable(t *testing.T) {
	l, terms := testModel(t, "chain:6", "tfim", map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, 0.3, 5)
	sys, _ := NewSystem(l.NumSites(), terms)
	th, err := validate.ExactThermal(l.NumSites(), terms, 0.7)
	if err != nil {
		t.Fatal(err)
	}
	vals := exactStrings(t, th, sys.Strings)
	tab := &fit.Table{}
	for j, s := range sys.Strings {
		if j == 5 {
			continue // leave one string out
		}
		tab.Rows = append(tab.Rows, fit.Row{Pauli: s.Pauli, Sites: s.Sites, Value: vals[j], Stderr: 1e-4, HasStderr: true})
	}
	var buf bytes.Buffer
	if err := fit.WriteTable(&buf, tab); err != nil {
		t.Fatal(err)
	}
	back, err := fit.ReadTable(&buf, "table.csv")
	if err != nil {
		t.Fatal(err)
	}
	est, err := EstimatesFromTable(back, sys)
	if err != nil {
		t.Fatal(err)
	}
	d, err := Solve(sys, est, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if d.Dropped == 0 {
		t.Error("no row left out for the missing string")
	}
	if e := directionError(d.Theta, truthTheta(sys)); e > 1e-4 {
		t.Errorf("direction error %g from exact table values", e)
	}
}
