package ising

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestExactSamplesMatchBeale draws exact samples of the 4×4 lattice and
// compares the frequencies of the energy levels with the Boltzmann weights
// g(E) e^{−E/T} of Beale's density of states by a chi-square test.
func TestExactSamplesMatchBeale(t *testing.T) {
	e, err := NewEnumeration(Lattice{4, 4})
	if err != nil {
		t.Fatal(err)
	}
	for _, T := range []float64{1.8, 2.269185, 3.5} {
		c := Couplings{T: T, Jx: 1, Jy: 1}
		// Expected level probabilities from Beale's table alone.
		levels := []int{}
		w := map[int]float64{}
		z := 0.0
		for en, g := range beale4x4 {
			w[en] = float64(g) * math.Exp(-float64(en)/T)
			z += w[en]
			levels = append(levels, en)
		}
		sort.Ints(levels)
		const n = 100000
		rng := rand.New(rand.NewPCG(7, uint64(T*1000)))
		xs := make([]uint8, n*16)
		e.Sample(xs, n, c, rng)
		obs := map[int]float64{}
		for m := 0; m < n; m++ {
			obs[int(e.Lattice().Energy(xs[m*16:(m+1)*16], c))]++
		}
		// Pool levels with expected count below 5 (common practice).
		chi2, dof := 0.0, -1
		var pe, po float64
		for _, en := range levels {
			pe += n * w[en] / z
			po += obs[en]
			if pe >= 5 {
				chi2 += (po - pe) * (po - pe) / pe
				dof++
				pe, po = 0, 0
			}
		}
		if pe > 0 {
			chi2 += (po - pe) * (po - pe) / math.Max(pe, 1e-300)
			dof++
		}
		p := 1 - distuv.ChiSquared{K: float64(dof)}.CDF(chi2)
		if p < 1e-4 {
			t.Errorf("T=%v: χ² = %.1f with %d degrees of freedom, p = %.2g", T, chi2, dof, p)
		}
	}
}
