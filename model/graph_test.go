package model

import (
	"math"
	"math/rand/v2"
	"testing"
)

func randomBatch(cfg Config, n int, seed uint64) ([]uint8, []float64) {
	r := rand.New(rand.NewPCG(seed, 1))
	xs := make([]uint8, n*cfg.Sites)
	for i := range xs {
		xs[i] = uint8(r.IntN(cfg.Alphabet))
	}
	ps := make([]float64, n*cfg.ParamDim)
	for i := range ps {
		ps[i] = -1 + 5*r.Float64() // also outside the range [1, 3]
	}
	return xs, ps
}

func relClose(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(math.Abs(a), math.Abs(b))
}

// TestGraphMatchesKernel checks that the gorgonia graph and the scoring
// kernel compute the same mean negative log-likelihood, for full and padded
// batches and for single snapshots.
func TestGraphMatchesKernel(t *testing.T) {
	for _, tc := range cases() {
		t.Run(tc.name, func(t *testing.T) {
			m := randomModel(t, tc.cfg, 11, tc.scale)
			const batch = 8
			g, err := NewGraph(m, batch)
			if err != nil {
				t.Fatal(err)
			}
			grads := zeroGrads(m)
			for _, n := range []int{batch, 5, 1} {
				xs, ps := randomBatch(tc.cfg, n, uint64(n))
				want, err := g.Loss(xs, ps, n)
				if err != nil {
					t.Fatal(err)
				}
				got, err := g.ForwardLoss(xs, ps, n)
				if err != nil {
					t.Fatal(err)
				}
				got2, err := g.LossGrad(xs, ps, n, grads)
				if err != nil {
					t.Fatal(err)
				}
				if !relClose(got, want, 1e-5) || !relClose(got2, want, 1e-5) {
					t.Errorf("n=%d: graph loss %v (with gradient %v), kernel loss %v", n, got, got2, want)
				}
				// Per snapshot as well.
				lp := make([]float64, 1)
				for i := 0; i < n; i++ {
					x := xs[i*tc.cfg.Sites : (i+1)*tc.cfg.Sites]
					lam := ps[i*tc.cfg.ParamDim : (i+1)*tc.cfg.ParamDim]
					if err := m.LogProb(lp, x, lam); err != nil {
						t.Fatal(err)
					}
					gl, err := g.ForwardLoss(x, lam, 1)
					if err != nil {
						t.Fatal(err)
					}
					if !relClose(-gl, lp[0], 1e-5) {
						t.Errorf("snapshot %d: graph log p %v, LogProb %v", i, -gl, lp[0])
					}
				}
			}
		})
	}
}

func zeroGrads(m *Model) [][]float64 {
	g := make([][]float64, len(m.Weights))
	for i, w := range m.Weights {
		g[i] = make([]float64, len(w.Data))
	}
	return g
}

// TestGradientFiniteDifference checks the gorgonia gradient of the loss
// against central finite differences of the scoring kernel's loss, for
// every parameter of small models, on a padded batch.
func TestGradientFiniteDifference(t *testing.T) {
	tests := []struct {
		name string
		cfg  Config
	}{
		{"q2-tanh-direct", smallConfig(5, 2, 1, func(c *Config) {
			c.Activation = "tanh"
			c.Direct = true
			c.Hidden = []int{6, 4}
			c.CondHidden = []int{3}
		})},
		{"q2-tanh-sym", smallConfig(5, 2, 2, func(c *Config) {
			c.Activation = "tanh"
			c.Symmetric = true
			c.Hidden = []int{6}
			c.CondHidden = []int{3, 2}
		})},
		{"q3-tanh-snake", smallConfig(4, 3, 1, func(c *Config) {
			c.Activation = "tanh"
			c.Direct = true
			c.Hidden = []int{5, 5}
			c.CondHidden = nil
			c.Order = SnakeOrder(2, 2)
		})},
		{"q2-relu", smallConfig(5, 2, 1, func(c *Config) { c.Hidden = []int{6, 5}; c.CondHidden = []int{3} })},
		{"q2-relu-cond-relu", smallConfig(5, 2, 1, func(c *Config) { c.Hidden = []int{6, 5}; c.CondHidden = []int{3}; c.CondActivation = "relu" })},
		{"q2-tanh-cond-relu", smallConfig(5, 2, 1, func(c *Config) {
			c.Activation = "tanh"
			c.CondActivation = "relu"
			c.Hidden = []int{6, 5}
			c.CondHidden = []int{3}
		})},
		{"q4-relu-direct", smallConfig(3, 4, 1, func(c *Config) { c.Direct = true; c.Hidden = []int{5}; c.CondHidden = []int{3} })},
		{"q2-softplus-direct", smallConfig(5, 2, 1, func(c *Config) {
			c.Activation = "softplus"
			c.Direct = true
			c.Hidden = []int{6, 5}
			c.CondHidden = []int{3}
		})},
		{"q2-softplus-sym", smallConfig(4, 2, 2, func(c *Config) {
			c.Activation = "softplus"
			c.Symmetric = true
			c.Hidden = []int{5, 5}
			c.CondHidden = []int{3}
		})},
		// FiLM: the fused scale-and-activation operation (filmLayer).
		{"q2-relu-film-direct", smallConfig(5, 2, 1, func(c *Config) {
			c.FiLM, c.Direct = true, true
			c.Hidden = []int{6, 5}
			c.CondHidden = []int{3}
		})},
		{"q2-softplus-film-sym", smallConfig(4, 2, 2, func(c *Config) {
			c.Activation = "softplus"
			c.FiLM, c.Symmetric = true, true
			c.Hidden = []int{5, 5}
			c.CondHidden = []int{3}
		})},
		{"q3-tanh-film-nocond", smallConfig(4, 3, 1, func(c *Config) {
			c.Activation = "tanh"
			c.FiLM, c.Direct = true, true
			c.Hidden = []int{5, 5}
			c.CondHidden = nil
		})},
	}
	for _, tc := range tests {
		// Each snapshot at its own λ, and on a grid of two λ, where the
		// conditioning heads run once per distinct λ (rowGroups).
		for _, grid := range []bool{false, true} {
			name := tc.name
			if grid {
				name += "-grid"
			}
			t.Run(name, func(t *testing.T) { checkFiniteDifference(t, tc.cfg, grid) })
		}
	}
}

// gridBatch is randomBatch with every snapshot's λ one of two values.
func gridBatch(cfg Config, n int, seed uint64) ([]uint8, []float64) {
	xs, ps := randomBatch(cfg, n, seed)
	d := cfg.ParamDim
	for i := 2; i < n; i++ {
		copy(ps[i*d:(i+1)*d], ps[(i%2)*d:(i%2+1)*d])
	}
	return xs, ps
}

// checkFiniteDifference compares LossGrad's gradient of a random model
// with central finite differences of the scoring kernel's loss.
func checkFiniteDifference(t *testing.T, cfg Config, grid bool) {
	m := randomModel(t, cfg, 12, 0.6)
	const batch, n = 7, 5
	g, err := NewGraph(m, batch)
	if err != nil {
		t.Fatal(err)
	}
	xs, ps := randomBatch(cfg, n, 13)
	if grid {
		xs, ps = gridBatch(cfg, n, 13)
	}
	grads := zeroGrads(m)
	if _, err := g.LossGrad(xs, ps, n, grads); err != nil {
		t.Fatal(err)
	}
	// Two λ and the padding rows' zero features: three groups.
	if g.grp.on != grid {
		t.Fatalf("rows grouped: %v, want %v", g.grp.on, grid)
	}
	const h = 1e-5
	for wi, w := range m.Weights {
		for k := range w.Data {
			old := w.Data[k]
			w.Data[k] = old + h
			lp := m.meanNLL(xs, ps, n)
			w.Data[k] = old - h
			lm := m.meanNLL(xs, ps, n)
			w.Data[k] = old
			fd := (lp - lm) / (2 * h)
			if math.Abs(fd-grads[wi][k]) > 1e-6+1e-4*math.Abs(fd) {
				t.Errorf("%s[%d]: gradient %v, finite difference %v", w.Name, k, grads[wi][k], fd)
			}
		}
	}
}

// TestGraphSharesWeights checks that in-place weight updates are seen by the
// graph without rebuilding it, and that a replaced Data slice is refused.
func TestGraphSharesWeights(t *testing.T) {
	cfg := smallConfig(6, 2, 1, func(c *Config) { c.Direct = true })
	m := randomModel(t, cfg, 14, 0.5)
	g, err := NewGraph(m, 4)
	if err != nil {
		t.Fatal(err)
	}
	xs, ps := randomBatch(cfg, 4, 15)
	grads := zeroGrads(m)
	before, err := g.LossGrad(xs, ps, 4, grads)
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range m.Weights { // one plain gradient step, in place
		for k := range w.Data {
			w.Data[k] -= 0.05 * grads[i][k]
		}
	}
	after, err := g.LossGrad(xs, ps, 4, grads)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := g.Loss(xs, ps, 4)
	if !(after < before) || !relClose(after, want, 1e-5) {
		t.Errorf("after a gradient step the graph loss is %v (before %v, kernel %v)", after, before, want)
	}
	m.Weights[0].Data = append([]float64(nil), m.Weights[0].Data...)
	if _, err := g.LossGrad(xs, ps, 4, grads); err == nil {
		t.Errorf("a replaced weight slice was not reported")
	}
}

// TestLossGradLeavesWeights checks that running the graph never writes into
// the shared weight arrays (gorgonia may run some operations in place), and
// that two graphs on one model may run concurrently with equal results.
func TestLossGradLeavesWeights(t *testing.T) {
	for _, tc := range cases() {
		t.Run(tc.name, func(t *testing.T) {
			m := randomModel(t, tc.cfg, 16, tc.scale)
			before := make([][]float64, len(m.Weights))
			for i, w := range m.Weights {
				before[i] = append([]float64(nil), w.Data...)
			}
			g1, err := NewGraph(m, 6)
			if err != nil {
				t.Fatal(err)
			}
			g2, err := NewGraph(m, 6)
			if err != nil {
				t.Fatal(err)
			}
			xs, ps := randomBatch(tc.cfg, 6, 17)
			gr1, gr2 := zeroGrads(m), zeroGrads(m)
			var l1, l2 float64
			var e1, e2 error
			done := make(chan struct{})
			go func() { l1, e1 = g1.LossGrad(xs, ps, 6, gr1); close(done) }()
			l2, e2 = g2.LossGrad(xs, ps, 6, gr2)
			<-done
			if e1 != nil || e2 != nil {
				t.Fatal(e1, e2)
			}
			if l1 != l2 {
				t.Errorf("two graphs on one model: losses %v and %v", l1, l2)
			}
			for i := range gr1 {
				for k := range gr1[i] {
					if gr1[i][k] != gr2[i][k] {
						t.Fatalf("two graphs on one model: gradient %s[%d] %v and %v", m.Weights[i].Name, k, gr1[i][k], gr2[i][k])
					}
				}
			}
			for i, w := range m.Weights {
				for k := range w.Data {
					if w.Data[k] != before[i][k] {
						t.Fatalf("LossGrad changed weight %s[%d] from %v to %v", w.Name, k, before[i][k], w.Data[k])
					}
				}
			}
		})
	}
}
