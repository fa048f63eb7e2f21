package bulk_test

import (
	"fmt"
	"strings"

	"warmfit/fit/bulk"
)

// A Curie–Weiss first look at the tail of a susceptibility curve: free
// spin-1/2 with g = 2 and theta = 5 K give back C = 0.3751 emu K/mol.
func ExampleFitCurieWeiss() {
	var b strings.Builder
	b.WriteString("T [K], chi [emu/mol], chi_err [emu/mol]\n")
	for t := 100.0; t <= 300; t += 20 {
		chi := bulk.CurieConstant(2, 0.5) / (t + 5)
		fmt.Fprintf(&b, "%g, %.10g, %.3g\n", t, chi, 1e-6*chi)
	}
	series, err := bulk.ParseCSV(strings.NewReader(b.String()), "tail.csv", bulk.ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	cw, err := bulk.FitCurieWeiss(series[0], bulk.CurieWeissOptions{Above: 100})
	if err != nil {
		fmt.Println(err)
		return
	}
	g, _ := cw.SpinHalfG(1)
	fmt.Printf("C = %.4f emu K/mol, theta = %.2f K, g = %.3f\n", cw.C, cw.Theta, g)
	// Output: C = 0.3751 emu K/mol, theta = 5.00 K, g = 2.000
}

// Fitting the exchange of a Heisenberg chain to its own susceptibility.
func ExampleFitCandidate() {
	fwd, err := bulk.NewPeriodicClusterModel("chain", bulk.PeriodicClusterOptions{Sites: 10, CompareSites: 8})
	if err != nil {
		fmt.Println(err)
		return
	}
	proto := []*bulk.Series{{Quantity: bulk.Susceptibility}}
	truth, _ := bulk.NewCandidate("truth", fwd, proto, nil, false, map[string]float64{bulk.ParamJ: 50, bulk.ParamImpurity: 0}, nil)
	s := &bulk.Series{Quantity: bulk.Susceptibility, File: "chain.csv", Column: "chi"}
	for t := 60.0; t <= 400; t += 20 {
		s.Points = append(s.Points, bulk.Point{T: t})
	}
	vals, _, _ := truth.Predict([]*bulk.Series{s})
	for i := range s.Points {
		s.Points[i].Value, s.Points[i].Stderr = vals[0][i], 1e-3*vals[0][i]
	}
	start := map[string]float64{bulk.ParamJ: 40, bulk.ParamImpurity: 0}
	fixed := map[string]bool{bulk.ParamChi0: true, bulk.ParamImpurity: true}
	c, _ := bulk.NewCandidate("chain", fwd, []*bulk.Series{s}, nil, false, start, fixed)
	res, err := bulk.FitCandidate(c, []*bulk.Series{s}, bulk.FitOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("J = %.3f K, g = %.4f, chi2 below 1e-12: %v\n", res.Params[0].Value, res.Params[1].Value, res.Chi2 < 1e-12)
	// Output: J = 50.000 K, g = 2.0000, chi2 below 1e-12: true
}
