//go:build !openblas || !cgo

package model

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestGoLoopKernels checks the default build's vectorised scoring passes
// against the scalar Go loops they replace: the states' float32 inputs
// bit for bit, the activation pass within one float32 rounding of a
// softplus a few ulp off, and the row log-likelihoods within the
// difference of two float64 sums of n terms with errors of a few ulp.
func TestGoLoopKernels(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, shape := range []struct{ rows, n int }{{1, 3}, {3, 64}, {5, 257}, {2, 1100}} {
		rows, n := shape.rows, shape.n
		xs := make([]uint8, rows*n)
		z := make([]float64, rows*n)
		for i := range xs {
			xs[i] = uint8(rng.IntN(2))
			z[i] = 30 * rng.NormFloat64()
			if i%7 == 0 {
				z[i] = rng.NormFloat64() / 100
			}
		}
		for _, flip := range []bool{false, true} {
			got32, want32 := make([]float32, rows*n), make([]float32, rows*n)
			vStates32(got32, xs, flip)
			states32Go(want32, xs, flip)
			for i := range got32 {
				if got32[i] != want32[i] {
					t.Fatalf("n=%d flip=%v: input %d is %v, Go loop %v", n, flip, i, got32[i], want32[i])
				}
			}
			got, want := make([]float64, rows), make([]float64, rows)
			vRowLP2(got, z, n, xs, n, rows, flip, make([]float64, 2*n))
			rowLP2Go(want, z, n, xs, n, rows, flip, nil)
			for i := range got {
				s := 0.0
				for _, v := range z[i*n : (i+1)*n] {
					s += math.Abs(v) + 1
				}
				if tol := 2 * float64(n+8) * 0x1p-53 * s; math.Abs(got[i]-want[i]) > tol {
					t.Fatalf("n=%d flip=%v row %d: log p %v, Go loop %v (difference %.3g above %.3g)", n, flip, i, got[i], want[i], math.Abs(got[i]-want[i]), tol)
				}
			}
		}
		src, b := make([]float64, rows*n), make([]float64, n)
		s32 := make([]float32, rows*n)
		for i := range src {
			src[i], s32[i] = 10*rng.NormFloat64(), float32(10*rng.NormFloat64())
		}
		for i := range b {
			b[i] = rng.NormFloat64()
		}
		for _, in64 := range []bool{true, false} {
			s64 := src
			if !in64 {
				s64 = nil
			}
			got32, want32 := make([]float32, rows*n), make([]float32, rows*n)
			vBiasAct32(got32, s64, s32, b, rows, n, actSoftplus)
			biasAct32Go(want32, s64, s32, b, rows, n, actSoftplus)
			for i := range got32 {
				g, w := float64(got32[i]), float64(want32[i])
				if d := math.Abs(g - w); d > 0x1p-23*math.Abs(w)+8*0x1p-53*(math.Abs(w)+1) {
					t.Fatalf("n=%d in64=%v: softplus %d is %v, Go loop %v", n, in64, i, g, w)
				}
			}
		}
	}
}
