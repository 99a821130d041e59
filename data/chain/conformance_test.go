package chain

import (
	"testing"

	"tidemark/data/density/densitytest"
)

// TestConformance runs the density contract's checks on a transverse-field
// chain in the computational and the random basis.
func TestConformance(t *testing.T) {
	for _, basis := range []Basis{BasisZ, BasisRandom} {
		s, err := New(Config{Sites: 6, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Basis: basis})
		if err != nil {
			t.Fatal(err)
		}
		densitytest.Conformance(t, s, [][]float64{{0.5}, {1}, {1.5}})
	}
}
