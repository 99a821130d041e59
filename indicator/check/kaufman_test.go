package check

import (
	"math"
	"testing"

	"tidemark/data/ising"
)

// TestKaufmanEntropyMatchesEnumeration checks the entropy check uses for
// large lattices against exact enumeration of the 4×4 and 4×6 lattices
// (s = ln Z/N + ⟨E⟩/(N T)), which the ising package checks against
// P. D. Beale's density of states (Phys. Rev. Lett. 76, 78 (1996)).
func TestKaufmanEntropyMatchesEnumeration(t *testing.T) {
	for _, tc := range []struct {
		ly, lx int
		c      ising.Couplings
	}{
		{4, 4, ising.Couplings{T: 1.5, Jx: 1, Jy: 1}},
		{4, 4, ising.Couplings{T: 2.269, Jx: 1, Jy: 1}},
		{4, 6, ising.Couplings{T: 3.2, Jx: 1, Jy: 0.5}},
	} {
		e, err := ising.NewEnumeration(ising.Lattice{Ly: tc.ly, Lx: tc.lx})
		if err != nil {
			t.Fatal(err)
		}
		n := float64(tc.ly * tc.lx)
		meanE, _, _ := e.Moments(tc.c)
		want := e.LogZ(tc.c)/n + meanE/n/tc.c.T
		got, ok := KaufmanEntropy(tc.ly, tc.lx, tc.c)
		if !ok || math.Abs(got-want) > 1e-9 {
			t.Errorf("%d×%d %+v: entropy per site %v (ok %v), enumeration %v", tc.ly, tc.lx, tc.c, got, ok, want)
		}
	}
	if _, ok := KaufmanEntropy(4, 4, ising.Couplings{T: 2, Jx: 1, Jy: 1, H: 0.1}); ok {
		t.Error("a field has no Kaufman entropy, but KaufmanEntropy accepted it")
	}
}
