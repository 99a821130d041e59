//go:build !openblas || !cgo

package model

import "tidemark/model/vmath"

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

// vAct64 runs softplus through the vectorised kernel of model/vmath
// (after adding the bias) and ReLU through act64Go.
func vAct64(x, b []float64, rows, w, act int) {
	if act != actSoftplus {
		act64Go(x, b, rows, w, act)
		return
	}
	x = x[:rows*w]
	if b != nil {
		b = b[:w]
		for i := 0; i < rows; i++ {
			r := x[i*w : (i+1)*w]
			for k := range r {
				r[k] += b[k]
			}
		}
	}
	vmath.Softplus(x, x)
}
func vFilmFwd(o []float64, o32 []float32, p, s []float64, relu bool) {
	filmFwdGo(o, o32, p, s, relu)
}
func vFilmBwd(dp, ds []float64, d32 []float32, d, s, o, p []float64, relu bool) {
	filmBwdGo(dp, ds, d32, d, s, o, p, relu)
}

// The FiLM layer's softplus and its derivative dA = dO·σ(A) run the
// vectorised kernels of model/vmath (assembly on amd64 with AVX2 and FMA),
// not gorgonia's scalar functions, so training rounds differently from the
// composed gorgonia operations (within a few ulp per value; film_test.go).
const filmSoftplusExact = false

func vFilmSoftplus(o, a []float64) { vmath.Softplus(o[:len(a)], a) }

func vFilmSoftplusGrad(da, d, a, o []float64) { vmath.SigmoidMul(da, d, a) }
