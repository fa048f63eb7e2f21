package validate

import (
	"fmt"
	"math"

	"warmfit/cluster"
)

// NewMixtureSampler samples the stationary state
// rho = sum_k weights[k] |v_k><v_k| of the eigenvectors v_k of spec
// (weights aligned with spec.Values(); they are normalised here). It
// commutes with the Hamiltonian whatever the weights, but is a Gibbs
// state only for weights proportional to exp(-beta E_k): the test case of
// a stationary, non-thermal state. Degenerate levels should get equal
// weights for the state to be independent of the eigenbasis chosen.
func NewMixtureSampler(spec *cluster.Spectrum, weights []float64) (*Sampler, error) {
	if len(weights) != spec.Dim() {
		return nil, fmt.Errorf("validate: %d weights for %d eigenvectors", len(weights), spec.Dim())
	}
	var sum float64
	for k, w := range weights {
		if !(w >= 0) || math.IsInf(w, 0) {
			return nil, fmt.Errorf("validate: weight %d is %v, want finite and >= 0", k, w)
		}
		sum += w
	}
	if sum <= 0 {
		return nil, fmt.Errorf("validate: mixture weights sum to %v", sum)
	}
	norm := make([]float64, len(weights))
	for k, w := range weights {
		norm[k] = w / sum
	}
	return newSampler(spec, norm), nil
}
