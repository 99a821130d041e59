package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestMaskedLinearMatchesDense checks the block-skipping masked products
// (forward, dX, dW) against dense products of gonum's mat package on masks
// large enough to have many blocks, for the row-major and the snake
// ordering (whose input degrees are not sorted), in both precisions.
func TestMaskedLinearMatchesDense(t *testing.T) {
	tests := []struct {
		name  string
		order func(c *Config)
		f32   bool
		tol   float64
	}{
		{"rowmajor-f64", func(c *Config) {}, false, 1e-12},
		{"snake-f64", func(c *Config) { c.Order = SnakeOrder(10, 15) }, false, 1e-12},
		{"rowmajor-f32", func(c *Config) {}, true, 1e-5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			cfg := DefaultConfig(150, 2, 1, []float64{0}, []float64{1})
			cfg.Hidden = []int{200, 130}
			tc.order(&cfg)
			m, err := New(cfg, 3)
			if err != nil {
				t.Fatal(err)
			}
			rng := rand.New(rand.NewPCG(5, 6))
			const b = 37
			for i, mk := range m.masks {
				in, out := mk.Shape[0], mk.Shape[1]
				ml := &maskedLinear{name: mk.Name, t: newTiling(mk.Data, in, out), f32: tc.f32}
				if i < len(m.masks)-1 || !cfg.Direct {
					// skipped blocks must be a real saving on these masks
					if ml.t.work() >= in*out {
						t.Errorf("%s: tiled work %d is not below dense %d", mk.Name, ml.t.work(), in*out)
					}
				}
				w := randSlice(rng, in*out)
				x := randSlice(rng, b*in)
				dy := randSlice(rng, b*out)
				weff := make([]float64, in*out)
				for k := range weff {
					weff[k] = w[k] * mk.Data[k]
				}
				W := mat.NewDense(in, out, weff)
				X := mat.NewDense(b, in, x)
				DY := mat.NewDense(b, out, dy)
				var Y, DX, DW mat.Dense
				Y.Mul(X, W)
				DX.Mul(DY, W.T())
				DW.Mul(X.T(), DY)
				DW.MulElem(&DW, mat.NewDense(in, out, mk.Data))

				ml.prepareW(w)
				y := make([]float64, b*out)
				ml.forward(y, x, b, false)
				dx := make([]float64, b*in)
				ml.gradX(dx, dy, b)
				dw := make([]float64, in*out)
				ml.gradW(dw, x, dy, b)
				for _, c := range []struct {
					what      string
					got, want []float64
				}{{"Y", y, Y.RawMatrix().Data}, {"dX", dx, DX.RawMatrix().Data}, {"dW", dw, DW.RawMatrix().Data}} {
					scale := 0.0
					for _, v := range c.want {
						scale = math.Max(scale, math.Abs(v))
					}
					for k := range c.want {
						if math.Abs(c.got[k]-c.want[k]) > tc.tol*scale {
							t.Fatalf("%s %s[%d] = %v, dense product gives %v", mk.Name, c.what, k, c.got[k], c.want[k])
						}
					}
				}
			}
		})
	}
}

func randSlice(rng *rand.Rand, n int) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = rng.NormFloat64()
	}
	return s
}
