package densitytest

import "testing"

// TestFakesConform runs the contract's checks on the shared fakes.
func TestFakesConform(t *testing.T) {
	Conformance(t, &Logistic{N: 6, D: 1, A: 2, C: 1}, [][]float64{{0.5}, {1}, {2}})
	Conformance(t, &Logistic{N: 5, D: 2, A: 3, C: 1, B: 0.5}, [][]float64{{0.5, 0}, {1, 1}})
	Conformance(t, Product{N: 7, P: func(l []float64) float64 { return 0.2 + 0.1*l[0] }}, [][]float64{{0}, {3}})
}
