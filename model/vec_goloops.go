//go:build !openblas || !cgo

package model

import "math"

// The default build runs the Go loops of loops.go (the openblas build runs
// C loops with the same signatures, vec_openblas.go).

func vTo32(dst []float32, src []float64)           { to32Go(dst, src) }
func vTo64(dst []float64, src []float32, acc bool) { to64Go(dst, src, acc) }
func vBernFwd(lp, e, x, z []float64, rows, n int, scratch []float64) {
	bernFwdGo(lp, e, x, z, rows, n, scratch)
}
func vStates32(dst []float32, xs []uint8, flip bool) { states32Go(dst, xs, flip) }
func vBernBwd(dz, x, z, e, g []float64, rows, n int) {
	bernBwdGo(dz, x, z, e, g, rows, n)
}
func vRowLP2(dst, z []float64, zs int, xs []uint8, n, rows int, flip bool, scratch []float64) {
	rowLP2Go(dst, z, zs, xs, n, rows, flip, scratch)
}
func vBiasAct32(dst []float32, src64 []float64, src32 []float32, b []float64, rows, w, act int) {
	biasAct32Go(dst, src64, src32, b, rows, w, act)
}
func vLogits32(z, dx []float64, y []float32, b []float64, rows, w int) {
	logits32Go(z, dx, y, b, rows, w)
}
func vFusedAct(res []float64, r32 []float32, y []float32, hd, b []float64, rows, w, act int) {
	fusedActGo(res, r32, y, hd, b, rows, w, act)
}
func vSoftplusGrad(res, a, o []float64)                      { softplusGradGo(res, a, o) }
func vReluGrad(res []float64, d32 []float32, a, o []float64) { reluGradGo(res, d32, a, o) }
func vColSum(db, a []float64, rows, w int)                   { colSumGo(db, a, rows, w) }
func vMasked32(dst []float32, w, mask []float64, c tile, out int) {
	masked32Go(dst, w, mask, c, out)
}
func vCombine32(dst []float64, g0, g1 []float32, f0, f1 float64, mask []float64, c tile, out, j0, j1 int) {
	combine32Go(dst, g0, g1, f0, f1, mask, c, out, j0, j1)
}
func vAct64(x, b []float64, rows, w, act int) { act64Go(x, b, rows, w, act) }
func vFilmFwd(o []float64, o32 []float32, p, s []float64, relu bool) {
	filmFwdGo(o, o32, p, s, relu)
}
func vFilmBwd(dp, ds []float64, d32 []float32, d, s, o, p []float64, relu bool) {
	filmBwdGo(dp, ds, d32, d, s, o, p, relu)
}

// The FiLM layer's softplus and its derivative dA = dO·σ(A) are gorgonia's
// (film.go), so that the default build trains bit for bit as with
// gorgonia's own operations.
const filmSoftplusExact = true

func vFilmSoftplus(o, a []float64) {
	o = o[:len(a)]
	for i, v := range a {
		o[i] = gorgoniaSoftplus(v)
	}
}

func vFilmSoftplusGrad(da, d, a, o []float64) {
	d, a = d[:len(da)], a[:len(da)]
	for i := range da {
		da[i] = gorgoniaSigmoid(a[i]) * d[i]
	}
}

// Gorgonia's softplus and sigmoid, written out so that the FiLM operation
// (film.go) rounds exactly as the composed gorgonia operations did
// (gorgonia v0.9.18, math.go and math_nooptim.go).
func gorgoniaSoftplus(x float64) float64 {
	if x < -708 {
		return 0
	}
	if x > 16 {
		return x
	}
	return math.Log1p(math.Exp(x))
}

func gorgoniaSigmoid(x float64) float64 {
	if x < -709 {
		return 0
	}
	if x > 19 {
		return 1
	}
	return 1.0 / (1.0 + math.Exp(-x))
}
