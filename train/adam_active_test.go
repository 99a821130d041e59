package train

import (
	"math"
	"math/rand/v2"
	"testing"

	"tidemark/model"
)

// TestAdamActiveRunsSameBits: skipping the entries outside a MADE's masks
// (Adam.SetActive with model.ActiveRuns) gives the weights and moments of
// the whole-slice update bit for bit, for one and several threads, with
// and without weight decay, over gradients that are zero outside the masks
// as the model's are.
func TestAdamActiveRunsSameBits(t *testing.T) {
	cfg := model.DefaultConfig(300, 2, 1, []float64{1}, []float64{3})
	m, err := model.New(cfg, 1)
	if err != nil {
		t.Fatal(err)
	}
	runs := m.ActiveRuns()
	skipped := 0
	for i, rs := range runs {
		if rs == nil {
			continue
		}
		in := 0
		for _, r := range rs {
			in += r[1] - r[0]
		}
		skipped += len(m.Weights[i].Data) - in
	}
	if skipped == 0 {
		t.Fatal("no entry lies outside the runs: nothing is tested")
	}
	for _, tc := range []struct {
		threads int
		decay   float64
	}{{1, 0}, {2, 0}, {3, 0}, {2, 0.01}} {
		update := func(active bool) [][]float64 {
			r := rand.New(rand.NewPCG(2, 2))
			sizes := make([]int, len(m.Weights))
			w := make([][]float64, len(m.Weights))
			for i, t := range m.Weights {
				sizes[i] = len(t.Data)
				w[i] = append([]float64(nil), t.Data...)
			}
			a := NewAdam(sizes, 0.9, 0.999, 1e-8, tc.decay)
			if active {
				a.SetActive(runs)
			}
			for step := 0; step < 3; step++ {
				g := make([][]float64, len(w))
				for i := range w {
					g[i] = make([]float64, len(w[i]))
					for j := range g[i] {
						if w[i][j] != 0 || runs[i] == nil {
							g[i][j] = r.NormFloat64() * 1e-2
						}
					}
				}
				a.UpdateThreads(w, g, 1e-3, tc.threads)
			}
			return append(w, append(a.M, a.V...)...)
		}
		want, got := update(false), update(true)
		for i := range want {
			for j := range want[i] {
				if math.Float64bits(got[i][j]) != math.Float64bits(want[i][j]) {
					t.Fatalf("threads %d, decay %v: slice %d entry %d: %v with runs, %v without", tc.threads, tc.decay, i, j, got[i][j], want[i][j])
				}
			}
		}
	}
}
