package fit_test

import (
	"fmt"
	"log"

	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// How many shots learn a transverse-field Ising chain to 0.02 in every
// coefficient, at 95% confidence?
func ExamplePlanShots() {
	lat, err := lattice.Open("chain:6")
	if err != nil {
		log.Fatal(err)
	}
	model, err := model.Preset(lat, "tfim", map[string]float64{"J": 1, "hx": 0.6})
	if err != nil {
		log.Fatal(err)
	}
	p, err := fit.PlanShots(lat, model, 0.3, fit.PlanOptions{Target: 0.02, Order: 6})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println("bases:", p.Bases)
	fmt.Println("shots per basis:", p.ShotsPerBasis, "total:", p.TotalShots)
	fmt.Printf("largest predicted stderr: %.4f\n", p.PredictedLinf())
	// Output:
	// bases: [XXXXXX ZZZZZZ]
	// shots per basis: 260780 total: 521560
	// largest predicted stderr: 0.0070
}
