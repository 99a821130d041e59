//go:build openblas && cgo

package model

// #cgo CFLAGS: -O3
// #cgo LDFLAGS: -lm
// #include <stdint.h>
// void tm_expneg_n(double *dst, const double *x, long n);
// void tm_bern_fwd(double *lp, double *e, double *t, const double *x, const double *z, long rows, long n);
// void tm_states32(float *dst, const uint8_t *x, long n, int flip);
// void tm_bern_bwd(double *dz, const double *x, const double *z, const double *e, const double *g, long rows, long n);
// void tm_rowlp2(double *dst, const double *z, long zs, const uint8_t *x, long n, long rows, int flip, double *scratch);
// void tm_to32(float *dst, const double *src, long n);
// void tm_to64(double *dst, const float *src, long n, int acc);
// void tm_bias_act32(float *dst, const double *src64, const float *src32, const double *b, long rows, long w, int act);
// void tm_logits32(double *z, const double *dx, const float *y, const double *b, long rows, long w);
// void tm_fused_act(double *res, float *r32, const float *y, const double *hd, const double *b, long rows, long w, int act);
// void tm_act64(double *x, const double *b, long rows, long w, int act);
// void tm_softplus_grad(double *res, const double *a, const double *o, long n);
// void tm_softplus_n(double *dst, const double *v, long n);
// void tm_expm1neg_n(double *dst, const double *o, long n);
// void tm_relu_grad(double *res, float *d32, const double *a, const double *o, long n);
// void tm_film_fwd(double *o, float *o32, const double *p, const double *s, long n, int relu);
// void tm_film_bwd(double *dp, double *ds, float *d32, const double *d, const double *s, const double *o, const double *p, long n, int relu);
// void tm_colsum(double *db, const double *a, long rows, long w);
// void tm_masked32(float *dst, const double *w, const double *mask, const uint8_t *full, long out, long a0, long a1, long lo, long hi);
// void tm_combine32(double *dst, const float *g0, const float *g1, double f0, double f1, const double *mask, const uint8_t *full, long out, long a0, long a1, long lo, long j0, long j1);
import "C"

import (
	"strconv"
	"unsafe"
)

// The openblas build runs the elementwise loops of loops.go as C loops
// that gcc vectorises (vec_openblas.c), one call per slice. Each wrapper
// first checks the lengths the Go loop would have checked, so a wrong
// length panics (and becomes an error) instead of reading past a slice.

// need panics unless a slice of length have holds n values.
func need(have, n int) {
	if n < 0 || have < n {
		panic("model: vector kernel needs " + strconv.Itoa(n) + " values, found " + strconv.Itoa(have))
	}
}

func pd(s []float64) *C.double {
	if len(s) == 0 {
		return nil
	}
	return (*C.double)(unsafe.Pointer(&s[0]))
}

func pf(s []float32) *C.float {
	if len(s) == 0 {
		return nil
	}
	return (*C.float)(unsafe.Pointer(&s[0]))
}

func pu(s []uint8) *C.uint8_t {
	if len(s) == 0 {
		return nil
	}
	return (*C.uint8_t)(unsafe.Pointer(&s[0]))
}

// pb passes a []bool as bytes (a Go bool is one byte, 0 or 1).
func pb(s []bool) *C.uint8_t {
	if len(s) == 0 {
		return nil
	}
	return (*C.uint8_t)(unsafe.Pointer(&s[0]))
}

// expNeg writes e^x[k] (x[k] ≤ 0) into dst by the C kernel's exponential,
// for tests.
func expNeg(dst, x []float64) {
	need(len(dst), len(x))
	if len(x) > 0 {
		C.tm_expneg_n(pd(dst), pd(x), C.long(len(x)))
	}
}

func vTo32(dst []float32, src []float64) {
	need(len(dst), len(src))
	if len(src) > 0 {
		C.tm_to32(pf(dst), pd(src), C.long(len(src)))
	}
}

func vTo64(dst []float64, src []float32, acc bool) {
	need(len(dst), len(src))
	if len(src) > 0 {
		a := C.int(0)
		if acc {
			a = 1
		}
		C.tm_to64(pd(dst), pf(src), C.long(len(src)), a)
	}
}

func vBernFwd(lp, e, x, z []float64, rows, n int, scratch []float64) {
	if rows*n == 0 {
		bernFwdGo(lp, e, x, z, rows, n, scratch)
		return
	}
	need(len(lp), rows)
	need(len(e), rows*n)
	need(len(x), rows*n)
	need(len(z), rows*n)
	need(len(scratch), n)
	C.tm_bern_fwd(pd(lp), pd(e), pd(scratch), pd(x), pd(z), C.long(rows), C.long(n))
}

func vStates32(dst []float32, xs []uint8, flip bool) {
	need(len(dst), len(xs))
	if len(xs) == 0 {
		return
	}
	f := C.int(0)
	if flip {
		f = 1
	}
	C.tm_states32(pf(dst), pu(xs), C.long(len(xs)), f)
}

func vBernBwd(dz, x, z, e, g []float64, rows, n int) {
	if rows*n == 0 {
		return
	}
	need(len(g), rows)
	for _, s := range [][]float64{dz, x, z, e} {
		need(len(s), rows*n)
	}
	C.tm_bern_bwd(pd(dz), pd(x), pd(z), pd(e), pd(g), C.long(rows), C.long(n))
}

func vRowLP2(dst, z []float64, zs int, xs []uint8, n, rows int, flip bool, scratch []float64) {
	if rows*n == 0 || zs < n {
		rowLP2Go(dst, z, zs, xs, n, rows, flip, scratch)
		return
	}
	need(len(dst), rows)
	need(len(z), (rows-1)*zs+n)
	need(len(xs), rows*n)
	need(len(scratch), 2*n)
	f := C.int(0)
	if flip {
		f = 1
	}
	C.tm_rowlp2(pd(dst), pd(z), C.long(zs), pu(xs), C.long(n), C.long(rows), f, pd(scratch))
}

func vBiasAct32(dst []float32, src64 []float64, src32 []float32, b []float64, rows, w, act int) {
	if rows*w == 0 {
		return
	}
	need(len(dst), rows*w)
	need(len(b), w)
	if src64 != nil {
		need(len(src64), rows*w)
	} else {
		need(len(src32), rows*w)
	}
	C.tm_bias_act32(pf(dst), pd(src64), pf(src32), pd(b), C.long(rows), C.long(w), C.int(act))
}

func vLogits32(z, dx []float64, y []float32, b []float64, rows, w int) {
	if rows*w == 0 {
		return
	}
	need(len(z), rows*w)
	need(len(y), rows*w)
	need(len(b), w)
	if dx != nil {
		need(len(dx), rows*w)
	}
	C.tm_logits32(pd(z), pd(dx), pf(y), pd(b), C.long(rows), C.long(w))
}

func vFusedAct(res []float64, r32 []float32, y []float32, hd, b []float64, rows, w, act int) {
	if rows*w == 0 {
		return
	}
	need(len(res), rows*w)
	need(len(y), rows*w)
	need(len(hd), rows*w)
	need(len(b), w)
	if r32 != nil {
		need(len(r32), rows*w)
	}
	C.tm_fused_act(pd(res), pf(r32), pf(y), pd(hd), pd(b), C.long(rows), C.long(w), C.int(act))
}

func vAct64(x, b []float64, rows, w, act int) {
	if rows*w == 0 {
		return
	}
	need(len(x), rows*w)
	if b != nil {
		need(len(b), w)
	}
	C.tm_act64(pd(x), pd(b), C.long(rows), C.long(w), C.int(act))
}

func vSoftplusGrad(res, a, o []float64) {
	n := len(o)
	if n == 0 {
		return
	}
	need(len(res), n)
	need(len(a), n)
	C.tm_softplus_grad(pd(res), pd(a), pd(o), C.long(n))
}

// softplusC and expm1NegC write the C kernels' softplus(v) and e^−o − 1
// (o ≥ 0) into dst, for tests.
func softplusC(dst, v []float64) {
	need(len(dst), len(v))
	if len(v) > 0 {
		C.tm_softplus_n(pd(dst), pd(v), C.long(len(v)))
	}
}

func expm1NegC(dst, o []float64) {
	need(len(dst), len(o))
	if len(o) > 0 {
		C.tm_expm1neg_n(pd(dst), pd(o), C.long(len(o)))
	}
}

func vReluGrad(res []float64, d32 []float32, a, o []float64) {
	n := len(o)
	if n == 0 {
		return
	}
	need(len(res), n)
	need(len(a), n)
	if d32 != nil {
		need(len(d32), n)
	}
	C.tm_relu_grad(pd(res), pf(d32), pd(a), pd(o), C.long(n))
}

func cbool(b bool) C.int {
	if b {
		return 1
	}
	return 0
}

func vFilmFwd(o []float64, o32 []float32, p, s []float64, relu bool) {
	n := len(o)
	if n == 0 {
		return
	}
	need(len(p), n)
	need(len(s), n)
	if o32 != nil {
		need(len(o32), n)
	}
	C.tm_film_fwd(pd(o), pf(o32), pd(p), pd(s), C.long(n), cbool(relu))
}

func vFilmBwd(dp, ds []float64, d32 []float32, d, s, o, p []float64, relu bool) {
	n := len(dp)
	if n == 0 {
		return
	}
	need(len(ds), n)
	need(len(d), n)
	need(len(s), n)
	need(len(p), n)
	if relu {
		need(len(o), n)
	} else {
		o = nil
	}
	if d32 != nil {
		need(len(d32), n)
	}
	C.tm_film_bwd(pd(dp), pd(ds), pf(d32), pd(d), pd(s), pd(o), pd(p), C.long(n), cbool(relu))
}

func vColSum(db, a []float64, rows, w int) {
	if rows*w == 0 {
		return
	}
	need(len(db), w)
	need(len(a), rows*w)
	C.tm_colsum(pd(db), pd(a), C.long(rows), C.long(w))
}

func vMasked32(dst []float32, w, mask []float64, c tile, out int) {
	if c.hi <= c.lo || c.a1 <= c.a0 {
		return
	}
	end := (c.hi-1)*out + c.a1
	need(len(dst), end)
	need(len(w), end)
	need(len(mask), end)
	need(len(c.full), c.hi-c.lo)
	C.tm_masked32(pf(dst), pd(w), pd(mask), pb(c.full), C.long(out), C.long(c.a0), C.long(c.a1), C.long(c.lo), C.long(c.hi))
}

func vCombine32(dst []float64, g0, g1 []float32, f0, f1 float64, mask []float64, c tile, out, j0, j1 int) {
	if j1 <= j0 || c.a1 <= c.a0 {
		return
	}
	if j0 < c.lo || j1 > c.hi {
		panic("model: combine32 rows outside the block")
	}
	end := (j1-1)*out + c.a1
	need(len(dst), end)
	need(len(g0), end)
	need(len(mask), end)
	if g1 != nil {
		need(len(g1), end)
	}
	C.tm_combine32(pd(dst), pf(g0), pf(g1), C.double(f0), C.double(f1), pd(mask), pb(c.full), C.long(out),
		C.long(c.a0), C.long(c.a1), C.long(c.lo), C.long(j0), C.long(j1))
}

// The FiLM layer's softplus and its derivative dA = dO·σ(A) run the C
// kernels above (from the output O: σ = 1 − e^−O), not gorgonia's scalar
// functions as in the default build, so training rounds differently there
// (by 1e-8 of the largest gradient entry after one step; film.go).
const filmSoftplusExact = false

func vFilmSoftplus(o, a []float64) {
	copy(o[:len(a)], a)
	vAct64(o, nil, 1, len(a), actSoftplus)
}

func vFilmSoftplusGrad(da, d, a, o []float64) { vSoftplusGrad(da, d, o[:len(da)]) }
