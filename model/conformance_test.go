package model

import (
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

var (
	_ density.Sampler      = (*Model)(nil)
	_ density.MatrixSource = (*Model)(nil)
	_ density.Enumerable   = (*Model)(nil)
)

// TestConformance runs the density contract's checks on untrained models of
// a binary and a three-state alphabet, and a flip-symmetric one (random
// weights: normalisation holds for any weights of an autoregressive model).
func TestConformance(t *testing.T) {
	for _, tc := range []struct {
		q         int
		symmetric bool
	}{{2, false}, {3, false}, {2, true}} {
		cfg := DefaultConfig(6, tc.q, 1, []float64{1}, []float64{3})
		cfg.Hidden = []int{12, 12}
		cfg.Symmetric = tc.symmetric
		m, err := New(cfg, 5)
		if err != nil {
			t.Fatal(err)
		}
		densitytest.Conformance(t, m, [][]float64{{1}, {2.2}, {3}})
	}
}
