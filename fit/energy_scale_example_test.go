package fit_test

import (
	"fmt"
	"log"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// A chain measured at an unknown temperature: the fit learns beta*lambda;
// one coupling known from a calibration (ZZ 0 1 = 1) fixes the scale and
// gives back beta and every lambda. Exact data at the exact order, so the
// recovery is exact.
func ExampleScaleEnergy() {
	lat, err := lattice.Open("chain:4")
	if err != nil {
		log.Fatal(err)
	}
	truth, err := model.Preset(lat, "tfim", map[string]float64{"J": 1, "hx": 0.6})
	if err != nil {
		log.Fatal(err)
	}
	const beta = 0.3 // unknown to the fit
	exp, err := cluster.NewExpansion(lat, truth)
	if err != nil {
		log.Fatal(err)
	}
	coeffs := make([]float64, len(truth))
	template := make([]lattice.Term, len(truth))
	for k, t := range truth {
		coeffs[k] = t.Coeff
		t.Coeff = 0
		template[k] = t
	}
	ev, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: 4})
	if err != nil {
		log.Fatal(err)
	}
	data := &fit.Estimates{Values: ev.Expect[3], Stderr: make([]float64, len(truth))}
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template, Data: data}, fit.Options{Order: 4})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("fitted %s = %.4f (beta*lambda)\n", res.Terms[0].Key(), res.Terms[0].Coeff)

	scaled, err := fit.ScaleEnergy(res, fit.Calibration{Term: "ZZ 0 1", Value: 1})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("beta = %.4f\n", scaled.EnergyScale.Beta)
	for _, t := range scaled.Terms[3:5] {
		fmt.Printf("%s = %.4f\n", t.Key(), t.Coeff)
	}
	// Output:
	// fitted ZZ 0 1 = 0.3000 (beta*lambda)
	// beta = 0.3000
	// X 0 = 0.6000
	// X 1 = 0.6000
}
