package model

import (
	"math"
	"testing"
)

// TestFiLMFusedMatchesComposed checks the fused FiLM operation (filmLayer)
// against the same graph built from gorgonia's own product, sum and
// activation operations: the loss and every weight gradient must agree bit
// for bit, over two steps (the second reuses the buffers) and through a
// BatchGraph of two chunks, so that the fused operation changes the speed
// of training and nothing else. The gradients themselves are checked
// against finite differences in TestGradientFiniteDifference.
func TestFiLMFusedMatchesComposed(t *testing.T) {
	film := func(mod func(*Config)) Config {
		return smallConfig(24, 2, 1, func(c *Config) {
			c.FiLM, c.Direct = true, true
			c.Hidden = []int{70, 40} // more than one column block
			if mod != nil {
				mod(c)
			}
		})
	}
	tests := []struct {
		name string
		cfg  Config
	}{
		{"relu", film(nil)},
		{"softplus", film(func(c *Config) { c.Activation = "softplus" })},
		{"tanh-nodirect", film(func(c *Config) { c.Activation = "tanh"; c.Direct = false })},
		{"softplus-sym", film(func(c *Config) { c.Activation = "softplus"; c.Symmetric = true })},
		{"relu-f32", film(func(c *Config) { c.Precision = PrecisionFloat32 })},
		{"softplus-f32-sym", film(func(c *Config) {
			c.Activation, c.Precision, c.Symmetric = "softplus", PrecisionFloat32, true
		})},
		{"q3-relu-3hidden", smallConfig(6, 3, 2, func(c *Config) {
			c.FiLM, c.Direct = true, true
			c.Hidden = []int{7, 8, 5}
			c.CondHidden = nil
		})},
		{"q3-tanh-nodirect", smallConfig(6, 3, 1, func(c *Config) { c.FiLM, c.Activation = true, "tanh" })},
		{"q3-softplus-d2", smallConfig(6, 3, 2, func(c *Config) { c.FiLM, c.Direct, c.Activation = true, true, "softplus" })},
		{"default-f32", func() Config {
			c := DefaultConfig(40, 2, 1, []float64{1}, []float64{3})
			c.FiLM, c.Precision = true, PrecisionFloat32
			return c
		}()},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := randomModel(t, tc.cfg, 41, 0.4)
			run := func(composed bool, threads int) (loss []float64, grads [][][]float64) {
				t.Helper()
				filmComposed = composed
				defer func() { filmComposed = false }()
				bg, err := NewBatchGraph(m, 32, threads)
				if err != nil {
					t.Fatal(err)
				}
				for step, n := range []int{32, 19} {
					xs, ps := randomBatch(tc.cfg, n, uint64(50+step))
					g := zeroGrads(m)
					l, err := bg.LossGrad(xs, ps, n, 1, g)
					if err != nil {
						t.Fatal(err)
					}
					loss, grads = append(loss, l), append(grads, g)
				}
				return loss, grads
			}
			// Bit for bit, except softplus where the build runs its own
			// vectorised kernels (filmSoftplusExact false). Those are
			// accurate to 4 ulp (model/vmath's TestSoftplus) or 8 units
			// of 2^-53 absolute (TestVecSoftplus, openblas), so
			// where softplus is small its relative error, and that of
			// σ = 1 − e^−O taken from it, reach 1e-10; carried through
			// the layers and summed over the batch that allows 1e-8 in
			// float64, and 1e-5 in float32 (where one such rounding can
			// move an input's float32 rounding), relative to the largest
			// entry of the loss or of the weight's gradient.
			same := func(a, b, scale float64) bool { return math.Float64bits(a) == math.Float64bits(b) }
			if tc.cfg.Activation == "softplus" && !filmSoftplusExact {
				tol := 1e-8
				if tc.cfg.Precision == PrecisionFloat32 {
					tol = 1e-5
				}
				same = func(a, b, scale float64) bool { return math.Abs(a-b) <= tol*scale }
			}
			maxAbs := func(v []float64) float64 {
				m := 0.0
				for _, x := range v {
					m = math.Max(m, math.Abs(x))
				}
				return m
			}
			for _, threads := range []int{1, 2} {
				wl, wg := run(true, threads)
				gl, gg := run(false, threads)
				for s := range wl {
					if !same(gl[s], wl[s], math.Abs(wl[s])) {
						t.Errorf("threads %d, step %d: fused loss %v, composed %v", threads, s, gl[s], wl[s])
					}
					for i, w := range m.Weights {
						scale := maxAbs(wg[s][i])
						for k := range wg[s][i] {
							if !same(gg[s][i][k], wg[s][i][k], scale) {
								t.Errorf("threads %d, step %d: %s[%d]: fused gradient %v, composed %v",
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
