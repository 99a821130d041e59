package model

import (
	"math"
	"slices"
	"testing"
)

// TestRowGroups checks the partition of a batch's feature rows.
func TestRowGroups(t *testing.T) {
	tests := []struct {
		name  string
		phi   []float64 // rows of two features
		on    bool
		first []int
		of    []int
	}{
		{"two values in runs", []float64{1, 2, 1, 2, 3, 4, 3, 4, 1, 2, 0, 0}, true, []int{0, 2, 5}, []int{0, 0, 1, 1, 0, 2}},
		{"all equal", []float64{5, 5, 5, 5, 5, 5, 5, 5}, true, []int{0}, []int{0, 0, 0, 0}},
		// 3 distinct of 4 rows: more than half, so no grouping.
		{"mostly distinct", []float64{1, 1, 2, 2, 3, 3, 1, 1}, false, nil, nil},
		// −0 and +0 differ in their bits: kept apart, which is safe.
		{"signed zeros", []float64{0, 1, math.Copysign(0, -1), 1, 0, 1, 0, 1, 0, 1, 0, 1}, true, []int{0, 1}, []int{0, 1, 0, 0, 0, 0}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var g rowGroups
			rows := len(tc.phi) / 2
			g.set(tc.phi, rows, 2)
			if g.on != tc.on {
				t.Fatalf("on = %v, want %v", g.on, tc.on)
			}
			if tc.on && (!slices.Equal(g.first, tc.first) || !slices.Equal(g.of, tc.of)) {
				t.Errorf("first %v of %v, want %v and %v", g.first, g.of, tc.first, tc.of)
			}
		})
	}
}

// TestGroupedHeadsMatchRowByRow checks that running the conditioning heads
// once per distinct λ (rowGroups) gives the loss and every weight gradient
// of the row-by-row products to rounding, through a BatchGraph of one and
// two chunks and over two steps, for both conditionings, both precisions,
// the flip symmetry and conditioning nets of zero, one and two layers. The
// gradients themselves are checked against finite differences on such
// batches in TestGradientFiniteDifference.
func TestGroupedHeadsMatchRowByRow(t *testing.T) {
	base := func(mod func(*Config)) Config {
		return smallConfig(24, 2, 1, func(c *Config) {
			c.Direct = true
			c.Hidden = []int{70, 40}
			c.CondHidden = []int{16}
			mod(c)
		})
	}
	tests := []struct {
		name string
		cfg  Config
	}{
		{"additive", base(func(c *Config) {})},
		{"film-softplus", base(func(c *Config) { c.FiLM, c.Activation = true, "softplus" })},
		{"film-relu-f32-sym", base(func(c *Config) { c.FiLM, c.Precision, c.Symmetric = true, PrecisionFloat32, true })},
		{"additive-f32-cond2", base(func(c *Config) { c.Precision, c.CondHidden = PrecisionFloat32, []int{8, 12} })},
		{"film-nocond", base(func(c *Config) { c.FiLM, c.CondHidden = true, nil })},
		{"q3-film-d2", smallConfig(6, 3, 2, func(c *Config) { c.FiLM, c.Activation = true, "tanh" })},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := randomModel(t, tc.cfg, 43, 0.4)
			// 5 grid points, interleaved in the first step and in runs of
			// 9 rows in the second, a partial batch (so the groups' first
			// rows move between steps).
			batch := func(n, step int) ([]uint8, []float64) {
				xs, ps := randomBatch(tc.cfg, n, uint64(60+step))
				d := tc.cfg.ParamDim
				for i := range n {
					j := i % 5
					if step == 1 {
						j = i / 9 * 9
					}
					copy(ps[i*d:(i+1)*d], ps[j*d:(j+1)*d])
				}
				return xs, ps
			}
			run := func(grouped bool, threads int) (loss []float64, grads [][][]float64) {
				t.Helper()
				groupRows = grouped
				defer func() { groupRows = true }()
				bg, err := NewBatchGraph(m, 64, threads)
				if err != nil {
					t.Fatal(err)
				}
				for step, n := range []int{64, 41} {
					xs, ps := batch(n, step)
					g := zeroGrads(m)
					l, err := bg.LossGrad(xs, ps, n, 1, g)
					if err != nil {
						t.Fatal(err)
					}
					for _, gr := range bg.graphs {
						if gr.grp.on != grouped {
							t.Fatalf("step %d: rows grouped %v, want %v", step, gr.grp.on, grouped)
						}
					}
					loss, grads = append(loss, l), append(grads, g)
				}
				return loss, grads
			}
			// Grouping changes only the order of the sums over rows.
			tol := 1e-12
			if tc.cfg.Precision == PrecisionFloat32 {
				tol = 1e-5
			}
			for _, threads := range []int{1, 2} {
				wl, wg := run(false, threads)
				gl, gg := run(true, threads)
				for s := range wl {
					if math.Abs(gl[s]-wl[s]) > tol*math.Abs(wl[s]) {
						t.Errorf("threads %d, step %d: grouped loss %v, row by row %v", threads, s, gl[s], wl[s])
					}
					for i, w := range m.Weights {
						scale := 0.0
						for _, v := range wg[s][i] {
							scale = math.Max(scale, math.Abs(v))
						}
						for k := range wg[s][i] {
							if math.Abs(gg[s][i][k]-wg[s][i][k]) > tol*scale {
								t.Errorf("threads %d, step %d: %s[%d]: grouped gradient %v, row by row %v",
									threads, s, w.Name, k, gg[s][i][k], wg[s][i][k])
								break
							}
						}
					}
				}
			}
		})
	}
}
