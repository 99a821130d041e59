package gemm

import (
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/gonum"
)

// Implementation is gonum's pure-Go BLAS with faster Dgemm and Sgemm; it
// satisfies gonum's blas.Float32 and blas.Float64 (and gorgonia's BLAS).
// The zero value is ready to use and safe for concurrent use.
type Implementation struct {
	gonum.Implementation
}

// Accelerated reports whether Dgemm and Sgemm run on this package's
// assembly kernels (amd64 with AVX2 and FMA); when false they are gonum's.
func Accelerated() bool { return useAsm }

// Kernels names the kernels Dgemm and Sgemm run on: "AVX-512" (amd64 with
// AVX-512F), "AVX2" (amd64 with AVX2 and FMA) or "gonum" (gonum's own
// Dgemm and Sgemm). The choice is made once, at start-up.
func Kernels() string { return kernelName() }

// useAsm switches the assembly path on; tests turn it off to check the
// fallback.
var useAsm = hasAsm

// minWork is the product size m·n·k below which gonum's unblocked loops
// are used: for such small products packing does not pay.
const minWork = 4 * 4 * 4

// Panic messages, as gonum's (gonum.org/v1/gonum/blas/gonum/errors.go).
const (
	badTranspose = "blas: illegal transpose"
	mLT0         = "blas: m < 0"
	nLT0         = "blas: n < 0"
	kLT0         = "blas: k < 0"
	badLdA       = "blas: bad leading dimension of A"
	badLdB       = "blas: bad leading dimension of B"
	badLdC       = "blas: bad leading dimension of C"
	shortA       = "blas: insufficient length of a"
	shortB       = "blas: insufficient length of b"
	shortC       = "blas: insufficient length of c"
)

// check panics as gonum's Dgemm and Sgemm do on bad arguments, in the
// same order; it returns whether A and B are transposed and whether there
// is nothing to compute (m or n is 0).
func check(tA, tB blas.Transpose, m, n, k, la, lda, lb, ldb, lc, ldc int) (aT, bT, none bool) {
	switch tA {
	default:
		panic(badTranspose)
	case blas.NoTrans, blas.Trans, blas.ConjTrans:
	}
	switch tB {
	default:
		panic(badTranspose)
	case blas.NoTrans, blas.Trans, blas.ConjTrans:
	}
	if m < 0 {
		panic(mLT0)
	}
	if n < 0 {
		panic(nLT0)
	}
	if k < 0 {
		panic(kLT0)
	}
	aT = tA == blas.Trans || tA == blas.ConjTrans
	if aT {
		if lda < max(1, m) {
			panic(badLdA)
		}
	} else if lda < max(1, k) {
		panic(badLdA)
	}
	bT = tB == blas.Trans || tB == blas.ConjTrans
	if bT {
		if ldb < max(1, k) {
			panic(badLdB)
		}
	} else if ldb < max(1, n) {
		panic(badLdB)
	}
	if ldc < max(1, n) {
		panic(badLdC)
	}
	if m == 0 || n == 0 {
		return aT, bT, true
	}
	if aT {
		if la < (k-1)*lda+m {
			panic(shortA)
		}
	} else if la < (m-1)*lda+k {
		panic(shortA)
	}
	if bT {
		if lb < (n-1)*ldb+k {
			panic(shortB)
		}
	} else if lb < (k-1)*ldb+n {
		panic(shortB)
	}
	if lc < (m-1)*ldc+n {
		panic(shortC)
	}
	return aT, bT, false
}

// Dgemm computes C = alpha·op(A)·op(B) + beta·C for row-major float64
// matrices, op(X) being X or Xᵀ as tA and tB say; op(A) is m×k, op(B) k×n
// and C m×n. With beta = 0, C is not read (NaNs in it are overwritten);
// with alpha = 0 or k = 0, A and B are not read. It panics on bad
// arguments with gonum's messages.
func (impl Implementation) Dgemm(tA, tB blas.Transpose, m, n, k int, alpha float64, a []float64, lda int, b []float64, ldb int, beta float64, c []float64, ldc int) {
	if !useAsm || m*n*k < minWork {
		impl.Implementation.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
		return
	}
	aT, bT, none := check(tA, tB, m, n, k, len(a), lda, len(b), ldb, len(c), ldc)
	if none {
		return
	}
	gemm(d64, aT, bT, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
}

// Sgemm computes C = alpha·op(A)·op(B) + beta·C for row-major float32
// matrices, as Dgemm does for float64.
func (impl Implementation) Sgemm(tA, tB blas.Transpose, m, n, k int, alpha float32, a []float32, lda int, b []float32, ldb int, beta float32, c []float32, ldc int) {
	if !useAsm || m*n*k < minWork {
		impl.Implementation.Sgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
		return
	}
	aT, bT, none := check(tA, tB, m, n, k, len(a), lda, len(b), ldb, len(c), ldc)
	if none {
		return
	}
	gemm(s32, aT, bT, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
}
