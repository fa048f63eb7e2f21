package cluster_test

import (
	"fmt"
	"log"

	"warmfit/cluster"
)

// A single spin in a field, H = 0.5 Z, at beta = 1: <Z> = -tanh(0.5) and
// log Z = log(2 cosh 0.5).
func ExampleNewThermal() {
	z, err := cluster.ParsePauli("Z", []int{0})
	if err != nil {
		log.Fatal(err)
	}
	x, _ := cluster.ParsePauli("X", []int{0})
	h := &cluster.Hamiltonian{NumQubits: 1, Ops: []cluster.PauliString{z}, Coeffs: []float64{0.5}}
	spec, err := cluster.Diagonalize(h)
	if err != nil {
		log.Fatal(err)
	}
	th, err := cluster.NewThermal(spec, 1)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("levels %v\n", spec.Values())
	fmt.Printf("log Z = %.6f, <Z> = %.6f, <X> = %.6f\n", th.LogZ(), th.Expect(z), th.Expect(x))
	fmt.Printf("E = %.6f, S = %.6f, C = %.6f\n", th.Energy(), th.Entropy(), th.HeatCapacity())
	resp := make([]float64, 4)
	th.Response([]cluster.PauliString{z, x}, resp)
	fmt.Printf("d<Z>/dc_Z = %.6f, d<X>/dc_X = %.6f\n", resp[0], resp[3])
	// Output:
	// levels [-0.5 0.5]
	// log Z = 0.813262, <Z> = -0.462117, <X> = 0.000000
	// E = -0.231059, S = 0.582203, C = 0.196612
	// d<Z>/dc_Z = -0.786448, d<X>/dc_X = -0.924234
}

// Reusing one Spectrum and one Thermal for many clusters avoids
// allocating per cluster; each goroutine should own its pair.
func ExampleSpectrum_Factorize() {
	var spec cluster.Spectrum
	var th cluster.Thermal
	zz, _ := cluster.ParsePauli("ZZ", []int{0, 1})
	for _, j := range []float64{-1, 0, 1} {
		h := &cluster.Hamiltonian{NumQubits: 2, Ops: []cluster.PauliString{zz}, Coeffs: []float64{j}}
		if err := spec.Factorize(h); err != nil {
			log.Fatal(err)
		}
		if err := th.Set(&spec, 2); err != nil {
			log.Fatal(err)
		}
		fmt.Printf("J = %+.0f: <ZZ> = %+.6f\n", j, th.Expect(zz))
	}
	// Output:
	// J = -1: <ZZ> = +0.964028
	// J = +0: <ZZ> = +0.000000
	// J = +1: <ZZ> = -0.964028
}
