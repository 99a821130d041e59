package ising

import (
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// Source is an exact density source for the indicators.
var (
	_ density.Sampler       = (*Source)(nil)
	_ density.Enumerable    = (*Source)(nil)
	_ density.EntropySource = (*KaufmanSource)(nil)
	_ density.Symmetric     = (*KaufmanSource)(nil)
	_ density.Symmetric     = (*Source)(nil)
)

// TestConformance runs the density contract's checks on the enumerated and
// the Kaufman source.
func TestConformance(t *testing.T) {
	src, err := NewSource(Lattice{Ly: 3, Lx: 3}, []string{"T", "h"}, Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	densitytest.Conformance(t, src, [][]float64{{1.5, 0}, {2.3, 0.2}, {4, -0.5}})
	k, err := NewKaufmanSource(Lattice{Ly: 4, Lx: 4}, []string{"T"}, Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	densitytest.Conformance(t, k, [][]float64{{1.5}, {2.3}, {4}})
}
