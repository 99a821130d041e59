//go:build validation

package train

import (
	"context"
	"math"
	"testing"

	"tidemark/data"
	"tidemark/data/ising"
)

func mcDataset(t *testing.T, l int, temps []float64, per int, seed uint64) *data.Dataset {
	t.Helper()
	pts := make([][]float64, len(temps))
	for i, T := range temps {
		pts[i] = []float64{T}
	}
	res, err := ising.Simulate(context.Background(), ising.Config{
		Lattice: ising.Lattice{Ly: l, Lx: l}, Fixed: ising.Couplings{Jx: 1, Jy: 1}, Axes: []string{"T"},
		Points: pts, Samples: per, Seed: seed, Threads: 2,
	})
	if err != nil {
		t.Fatal(err)
	}
	ds, err := data.New(len(temps)*per, l*l, []string{"T"}, 2, []int{l, l}, map[string]any{"generator": "test-mc-ising"})
	if err != nil {
		t.Fatal(err)
	}
	ds.States, ds.Params = res.States, res.Params
	return ds
}

// TestTrainMatchesKaufmanEntropy trains with the default settings on Monte
// Carlo samples of the 8×8 periodic Ising model at 12 temperatures and
// scores fresh samples: the mean NLL per site minus the exact entropy per
// site S/N = ln Z/N + ⟨H⟩/(N T), from Kaufman's exact finite-lattice
// partition function (B. Kaufman, Phys. Rev. 76, 1232 (1949)), estimates
// KL(p‖model)/N, which must be small at every temperature.
func TestTrainMatchesKaufmanEntropy(t *testing.T) {
	const L = 8
	temps := linspace(1.5, 3.5, 12)
	ds := mcDataset(t, L, temps, 1000, 1)
	test := mcDataset(t, L, temps, 500, 2)
	ck, err := Run(context.Background(), ds, Options{Settings: DefaultSettings()})
	if err != nil {
		t.Fatal(err)
	}
	h := ck.Header
	t.Logf("stopped %s after %d epochs, best %d, val %.4f bits/site, %.0f samples/s",
		h.Stopped, len(h.Metrics), h.BestEpoch, h.BestValBitsPerSite, h.Metrics[len(h.Metrics)-1].SamplesPerS)
	m, err := ck.Model()
	if err != nil {
		t.Fatal(err)
	}
	g := data.NewGrid(test)
	N := float64(L * L)
	worst, mean := 0.0, 0.0
	for k, idx := range g.Index {
		T := g.Points[k][0]
		xs := make([]uint8, 0, len(idx)*L*L)
		for _, i := range idx {
			xs = append(xs, test.Row(i)...)
		}
		lp := make([]float64, len(idx))
		if err := m.LogProb(lp, xs, g.Points[k]); err != nil {
			t.Fatal(err)
		}
		nll := 0.0
		for _, v := range lp {
			nll -= v
		}
		nll /= float64(len(idx)) * N
		s := ising.KaufmanLogZ(L, L, T, 1, 1)/N + ising.KaufmanEnergy(L, L, T, 1, 1)/T
		gap := nll - s
		t.Logf("T=%.4f NLL %.5f exact entropy %.5f gap %+.5f nats/site", T, nll, s, gap)
		worst = math.Max(worst, gap)
		mean += gap / float64(g.K())
	}
	t.Logf("gap: mean %.5f, worst %.5f nats/site", mean, worst)
	// Bounds chosen for this check: 0.01 nats per site on average (the bound
	// the 4×4 enumeration check puts on the KL at trained points) and 0.02 at
	// any point, which leaves room for the test set's sampling noise
	// (about 0.003 nats per site with 500 samples). Measured on the
	// development machine: mean 0.0061, worst 0.0129; doubling the samples
	// per point gave 0.0039 and 0.0097, so the remaining gap is mostly the
	// finite training set, not the optimiser.
	if mean > 0.01 || worst > 0.02 {
		t.Errorf("NLL exceeds the exact entropy by %.4f nats/site on average and up to %.4f, want ≤ 0.01 and ≤ 0.02", mean, worst)
	}
}
