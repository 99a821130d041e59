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
func vStates32(dst []float32, xs []uint8, flip bool) { states32Bits(dst, xs, flip) }
func vBernBwd(dz, x, z, e, g []float64, rows, n int) {
	bernBwdGo(dz, x, z, e, g, rows, n)
}

// vRowLP2 sums the per-site terms x·z − softplus(z) of each row with the
// softplus of model/vmath (a few ulp from rowLP2Go's terms, which take one
// logarithm of a product per prodTerms sites; rowLP2Go's scalar exp and
// log were a fifth of the CPU time of scoring at float32).
func vRowLP2(dst, z []float64, zs int, xs []uint8, n, rows int, flip bool, scratch []float64) {
	sp := scratch[:n]
	var fb uint8
	if flip {
		fb = 1
	}
	for i := 0; i < rows; i++ {
		x := xs[i*n : (i+1)*n]
		zr := z[i*zs : i*zs+n]
		vmath.Softplus(sp, zr)
		s := 0.0
		for j, v := range x {
			s += float64(v^fb)*zr[j] - sp[j]
		}
		dst[i] = s
	}
}

// vBiasAct32 runs softplus through the vectorised kernel of model/vmath,
// in float64, before rounding to float32 (as the float64 path, vAct64);
// ReLU through biasAct32Go.
func vBiasAct32(dst []float32, src64 []float64, src32 []float32, b []float64, rows, w, act int) {
	if act != actSoftplus {
		biasAct32Go(dst, src64, src32, b, rows, w, act)
		return
	}
	b = b[:w]
	var buf [256]float64
	for i := 0; i < rows; i++ {
		for lo := 0; lo < w; lo += len(buf) {
			hi := min(w, lo+len(buf))
			t := buf[:hi-lo]
			if src64 != nil {
				s := src64[i*w+lo : i*w+hi]
				for k := range t {
					t[k] = s[k] + b[lo+k]
				}
			} else {
				s := src32[i*w+lo : i*w+hi]
				for k := range t {
					t[k] = float64(s[k]) + b[lo+k]
				}
			}
			vmath.Softplus(t, t)
			d := dst[i*w+lo : i*w+hi]
			for k, v := range t {
				d[k] = float32(v)
			}
		}
	}
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
