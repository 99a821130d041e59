//go:build openblas && cgo

package train

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestAdamCMatchesGo: the openblas build's vectorised Adam step against
// the pure-Go loop (adamSliceGo), at every instruction set the CPU has,
// with and without decay, on slices with runs of zero gradients and
// moments (the masked-out weights the loop skips), with signed zeros and
// lengths that are not multiples of a vector. The moments must be the same
// bits (the same operations in the same order). The C step folds the bias
// corrections into constants (see adam_openblas.c): each of the two
// evaluations of lr·(m/bc1)/(√(v/bc2)+ε) has at most 6 roundings, so they
// differ by at most about 12u of the step (u = 2^−53), plus u of the weight
// for rounding w − step; the tolerance is 16u·(|step| + |decay term|) +
// 2u·|w| (the decay term, computed alike, cannot cancel the allowance). All
// instruction sets must give the same bits as the scalar C loop.
func TestAdamCMatchesGo(t *testing.T) {
	const u = 0x1p-53
	for _, n := range []int{1, 5, 63, 64, 200, 1031} {
		for _, decay := range []bool{false, true} {
			var ref []float64 // the scalar C loop's weights
			for isa := 0; isa <= adamISA(); isa++ {
				rng := rand.New(rand.NewPCG(8, uint64(n)))
				w, g, m, v := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
				for j := range w {
					w[j] = rng.NormFloat64()
					if j%97 < 70 || rng.IntN(5) == 0 {
						g[j] = 1e-3 * rng.NormFloat64()
						m[j] = 1e-3 * rng.NormFloat64()
						v[j] = 1e-6 * rng.Float64()
					}
					if rng.IntN(40) == 0 {
						g[j] = math.Copysign(0, -1)
					}
				}
				for step := 1; step <= 3; step++ {
					w0 := clone(w)
					w2, m2, v2 := clone(w), clone(m), clone(v)
					bc1, bc2 := 1-math.Pow(0.9, float64(step)), 1-math.Pow(0.999, float64(step))
					wd := 0.0
					if decay {
						wd = 2e-3 * 0.01
					}
					adamSliceISA(w, g, m, v, 0.9, 0.999, 1e-8, 2e-3, bc1, bc2, wd, decay, isa)
					adamSliceGo(w2, g, m2, v2, 0.9, 0.999, 1e-8, 2e-3, bc1, bc2, wd, decay)
					for j := range w {
						if math.Float64bits(m[j]) != math.Float64bits(m2[j]) || math.Float64bits(v[j]) != math.Float64bits(v2[j]) {
							t.Fatalf("isa %d, n=%d, decay=%v, entry %d: moments (%v, %v), Go loop (%v, %v)", isa, n, decay, j, m[j], v[j], m2[j], v2[j])
						}
						tol := 16*u*(math.Abs(w0[j]-w2[j])+wd*math.Abs(w0[j])) + 2*u*math.Abs(w2[j])
						if d := math.Abs(w[j] - w2[j]); d > tol {
							t.Fatalf("isa %d, n=%d, decay=%v, entry %d: weight %v, Go loop %v (difference %.3g above %.3g)", isa, n, decay, j, w[j], w2[j], d, tol)
						}
					}
				}
				if isa == 0 {
					ref = clone(w)
					continue
				}
				for j := range w {
					if math.Float64bits(w[j]) != math.Float64bits(ref[j]) {
						t.Fatalf("isa %d, n=%d, decay=%v, entry %d: %v, scalar C loop %v", isa, n, decay, j, w[j], ref[j])
					}
				}
			}
		}
	}
	// With ε = 0 the Go loop's skip is what keeps 0/0 out of the masked-out
	// entries; the C loop must skip exactly the same ones.
	w, g, m, v := []float64{1, 2, 3}, []float64{0, 1e-3, 0}, []float64{0, 0, 0}, []float64{0, 0, 0}
	adamSlice(w, g, m, v, 0.9, 0.999, 0, 1e-3, 0.1, 0.001, 0, false)
	if w[0] != 1 || w[2] != 3 || math.IsNaN(w[1]) {
		t.Fatalf("ε = 0: weights %v, want the zero-gradient entries untouched and no NaN", w)
	}
}

// TestSumSquaresC: the vectorised Σ g² of ClipGlobalNorm against the Go
// loop, within twice the bound n·u·Σ g² on the error of each float64 sum
// of n nonnegative terms (u = 2^−53; Higham, Accuracy and Stability of
// Numerical Algorithms, SIAM 2002, §4.2).
func TestSumSquaresC(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 7))
	for _, n := range []int{0, 1, 7, 8, 9, 1000, 100003} {
		g := make([]float64, n)
		for j := range g {
			g[j] = rng.NormFloat64() * math.Exp(4*rng.NormFloat64())
		}
		got, want := sumSquares(g), sumSquaresGo(g)
		if tol := 2 * float64(n) * 0x1p-53 * want; math.Abs(got-want) > tol {
			t.Fatalf("n=%d: Σg² = %v, Go loop %v (difference %.3g above %.3g)", n, got, want, math.Abs(got-want), tol)
		}
	}
}

func clone(s []float64) []float64 { return append([]float64(nil), s...) }
