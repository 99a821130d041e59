//go:build openblas && cgo

package train

// #cgo CFLAGS: -O3
// #cgo LDFLAGS: -lm
// void tm_adam_init(void);
// int tm_adam_isa(void);
// double tm_sumsq(const double *g, long n);
// void tm_adam(double *w, const double *g, double *m, double *v, long n, double b1, double b2, double eps, double lr,
//              double bc1, double bc2, double wd, int decay, int isa);
import "C"

import (
	"fmt"
	"unsafe"
)

func init() { C.tm_adam_init() }

// adamSlice is the Adam step of one slice by the vectorised C loop of
// adam_openblas.c, one call per slice: the same moments as adamSliceGo
// and a step within a few units in the last place of its step
// (adam_openblas_test.go), the same bits for every thread count.
func adamSlice(wi, gi, mi, vi []float64, b1, b2, eps, lr, bc1, bc2, wd float64, decay bool) {
	adamSliceISA(wi, gi, mi, vi, b1, b2, eps, lr, bc1, bc2, wd, decay, -1)
}

// adamISA is the vector instruction set the C loop uses: 2 for AVX-512, 1
// for AVX2, 0 for none (scalar).
func adamISA() int { return int(C.tm_adam_isa()) }

// adamSliceISA is adamSlice with the instruction set capped at isa (as in
// adamISA; −1 for the best the CPU has), for tests.
func adamSliceISA(wi, gi, mi, vi []float64, b1, b2, eps, lr, bc1, bc2, wd float64, decay bool, isa int) {
	n := len(gi)
	if n == 0 {
		return
	}
	if len(wi) < n || len(mi) < n || len(vi) < n {
		panic(fmt.Sprintf("train: Adam slices of lengths %d, %d, %d, %d differ", len(wi), n, len(mi), len(vi)))
	}
	d := C.int(0)
	if decay {
		d = 1
	}
	p := func(s []float64) *C.double { return (*C.double)(unsafe.Pointer(&s[0])) }
	C.tm_adam(p(wi), p(gi), p(mi), p(vi), C.long(n), C.double(b1), C.double(b2), C.double(eps), C.double(lr),
		C.double(bc1), C.double(bc2), C.double(wd), d, C.int(isa))
}

// sumSquares is Σ v² over g by the C loop of adam_openblas.c, which sums
// in 8 interleaved partial sums (vectorised) and so differs from
// sumSquaresGo in rounding only.
func sumSquares(g []float64) float64 {
	if len(g) == 0 {
		return 0
	}
	return float64(C.tm_sumsq((*C.double)(unsafe.Pointer(&g[0])), C.long(len(g))))
}
