//go:build !openblas || !cgo

package train

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestAdamSliceMatchesGo checks that the default build's Adam step gives
// the weights of the scalar Go loop bit for bit (so that training is
// reproducible across the change), with entries whose gradient and
// moments are 0 (outside a mask) among them.
func TestAdamSliceMatchesGo(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	const n = 4099
	for _, decay := range []bool{false, true} {
		w, g, m, v := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range w {
			w[i] = rng.NormFloat64()
			if i%4 != 0 && (i < 1000 || i >= 2003) { // a masked block, as in a MADE weight
				g[i], m[i], v[i] = rng.NormFloat64()*1e-2, rng.NormFloat64()*1e-3, rng.Float64()*1e-4
			}
		}
		w0, m0, v0 := slices.Clone(w), slices.Clone(m), slices.Clone(v)
		for step := 1; step <= 3; step++ {
			bc1, bc2 := 1-math.Pow(0.9, float64(step)), 1-math.Pow(0.999, float64(step))
			adamSlice(w, g, m, v, 0.9, 0.999, 1e-8, 2e-3, bc1, bc2, 2e-5, decay)
			adamSliceGo(w0, g, m0, v0, 0.9, 0.999, 1e-8, 2e-3, bc1, bc2, 2e-5, decay)
		}
		for i := range w {
			if math.Float64bits(w[i]) != math.Float64bits(w0[i]) || m[i] != m0[i] || v[i] != v0[i] {
				t.Fatalf("decay %v, entry %d: w, m, v = %v, %v, %v; the Go loop %v, %v, %v", decay, i, w[i], m[i], v[i], w0[i], m0[i], v0[i])
			}
		}
	}
}
