package model_test

import (
	"fmt"
	"math"

	"tidemark/model"
)

// ExampleNew builds a small conditional MADE over a 2×2 Ising lattice whose
// training temperatures ran from 1.5 to 3.5 and scores snapshots at T = 2.3.
// The weights are freshly initialised (random but fixed by the seed), so the
// values only show the calls; yet the probabilities of all 2⁴ snapshots sum
// to one at any λ, which is what makes the model's likelihoods usable in
// Bayes-optimal indicators.
func ExampleNew() {
	cfg := model.DefaultConfig(4, 2, 1, []float64{1.5}, []float64{3.5})
	m, err := model.New(cfg, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	xs := make([]uint8, 0, 16*4) // all 16 snapshots, site 0 first
	for k := 0; k < 16; k++ {
		for s := 3; s >= 0; s-- {
			xs = append(xs, uint8(k>>s&1))
		}
	}
	lp := make([]float64, 16)
	for _, T := range []float64{2.3, 5.0} {
		if err := m.LogProb(lp, xs, []float64{T}); err != nil {
			fmt.Println(err)
			return
		}
		sum := 0.0
		for _, v := range lp {
			sum += math.Exp(v)
		}
		fmt.Printf("T = %.1f: Σ p = %.12f\n", T, sum)
	}
	fmt.Printf("hidden %v, cond %v, %d parameters\n", cfg.Hidden, cfg.CondHidden, m.NumParams())
	// Output:
	// T = 2.3: Σ p = 1.000000000000
	// T = 5.0: Σ p = 1.000000000000
	// hidden [32 32], cond [64], 10452 parameters
}
