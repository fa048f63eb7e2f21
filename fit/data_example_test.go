package fit_test

import (
	"fmt"
	"log"
	"os"
	"strings"

	"warmfit/fit"
	"warmfit/lattice"
)

func ExampleReadTable() {
	src := `# measured on a 3-site chain
pauli,sites,value,stderr
Z,0,0.25,0.01
XZ,2 1,0.0625,0.02
X,2,-0.125,exact
`
	tab, err := fit.ReadTable(strings.NewReader(src), "chain.csv")
	if err != nil {
		log.Fatal(err)
	}
	for _, r := range tab.Rows {
		if r.HasStderr {
			fmt.Printf("%s on %v: %v ± %v\n", r.Pauli, r.Sites, r.Value, r.Stderr)
		} else {
			fmt.Printf("%s on %v: %v (exact)\n", r.Pauli, r.Sites, r.Value)
		}
	}
	// Output:
	// Z on [0]: 0.25 ± 0.01
	// ZX on [1 2]: 0.0625 ± 0.02
	// X on [2]: -0.125 (exact)
}

func ExampleWriteTable() {
	tab := &fit.Table{
		Comments: []string{"two terms"},
		Rows: []fit.Row{
			{Pauli: "ZZ", Sites: []int{0, 1}, Value: 1.0 / 3, Stderr: 0.01, HasStderr: true},
			{Pauli: "X", Sites: []int{4}, Value: -0.5},
		},
	}
	if err := fit.WriteTable(os.Stdout, tab); err != nil {
		log.Fatal(err)
	}
	// Output:
	// # two terms
	// pauli,sites,value,stderr
	// ZZ,0 1,0.3333333333333333,0.01
	// X,4,-0.5,exact
}

func ExampleNewSnapshotEstimator() {
	terms := []lattice.Term{}
	for _, t := range []struct {
		pauli string
		sites []int
	}{{"Z", []int{0}}, {"ZZ", []int{0, 1}}, {"X", []int{1}}} {
		term, err := lattice.NewTerm(t.pauli, t.sites, 0)
		if err != nil {
			log.Fatal(err)
		}
		terms = append(terms, term)
	}
	e, err := fit.NewSnapshotEstimator(2, terms, fit.DefaultCovarianceOptions())
	if err != nil {
		log.Fatal(err)
	}
	// Shots as read from a snapshot file: basis, outcome, count.
	shots := []struct {
		basis, outcome string
		count          int64
	}{
		{"ZZ", "00", 40}, {"ZZ", "11", 30}, {"ZZ", "01", 20}, {"ZZ", "10", 10},
		{"ZX", "00", 60}, {"ZX", "01", 40},
	}
	for _, s := range shots {
		if err := e.Add(s.basis, s.outcome, s.count); err != nil {
			log.Fatal(err)
		}
	}
	est, err := e.Result()
	if err != nil {
		log.Fatal(err)
	}
	for k, t := range terms {
		fmt.Printf("%-6s %+.4f ± %.4f  (%d shots)\n", t.Key(), est.Values[k], est.Stderr[k], est.Shots[k])
	}
	fmt.Printf("cov(Z 0, ZZ 0 1) = %.6f\n", est.Cov.At(0, 1))
	// By hand: Z0 = (40-30+20-10+100)/200 = 0.6, stderr sqrt(0.64/199);
	// ZZ = (40+30-20-10)/100 = 0.4, stderr sqrt(0.84/99); X1 = (60-40)/100;
	// the 100 ZZ shots serve both Z0 and ZZ: sum x_Z0 x_ZZ = 40-30-20+10 = 0,
	// so c = (0 - 20*40/100)/99 and cov = 100 c/(200*100).

	// Output:
	// Z 0    +0.6000 ± 0.0567  (200 shots)
	// ZZ 0 1 +0.4000 ± 0.0921  (100 shots)
	// X 1    +0.2000 ± 0.0985  (100 shots)
	// cov(Z 0, ZZ 0 1) = -0.000404
}
