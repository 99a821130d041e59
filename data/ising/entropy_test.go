package ising

import (
	"math"
	"testing"

	"tidemark/data/density"
)

// TestKaufmanEntropyMatchesEnumeration checks the Kaufman source's entropy
// (B. Kaufman, Phys. Rev. 76, 1232 (1949)) against the sum −Σ p ln p over
// all 2^16 states of the same periodic 4×4 lattice.
func TestKaufmanEntropyMatchesEnumeration(t *testing.T) {
	l := Lattice{Ly: 4, Lx: 4}
	k, err := NewKaufmanSource(l, []string{"T"}, Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	e, err := NewSource(l, []string{"T"}, Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, T := range []float64{1.5, 2.269, 3.5} {
		got, err := k.EntropyPerSite([]float64{T})
		if err != nil {
			t.Fatal(err)
		}
		d, err := density.ExhaustiveDivergence(e, e, []float64{T}, 2, nil)
		if err != nil {
			t.Fatal(err)
		}
		if want := d.Entropy / 16; math.Abs(got-want) > 1e-9 {
			t.Errorf("T=%v: Kaufman entropy %.12f per site, enumeration %.12f", T, got, want)
		}
	}
	if _, err := k.EntropyPerSite([]float64{-1}); err == nil {
		t.Error("T = −1 accepted")
	}
}
