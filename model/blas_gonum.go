//go:build !openblas || !cgo

package model

import (
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/blas/blas64"
	G "gorgonia.org/gorgonia"

	fastgemm "tidemark/model/gemm"
)

// BLAS names the BLAS implementation the build uses, for reports: in the
// default build gonum's pure-Go BLAS, with Dgemm and Sgemm from
// tidemark/model/gemm on its AVX-512 or AVX2 assembly kernels when the CPU
// has them (it is set once at start-up and never changes); with the tag openblas
// and cgo enabled, OpenBLAS (without cgo the tag has no effect).
var BLAS = blasName()

func blasName() string {
	if fastgemm.Accelerated() {
		return "gonum (pure Go) + " + fastgemm.Kernels() + " GEMM"
	}
	return "gonum (pure Go)"
}

// BLASCore returns the name of the CPU kernels OpenBLAS runs; it is empty
// in the default build.
func BLASCore() string { return "" }

// In the default build, gonum's BLAS (the scoring kernel and the masked
// products) and gorgonia's BLAS (the rest of the training graph) both use
// gemm.Implementation: gonum's pure-Go routines except Dgemm and Sgemm,
// which run on tidemark/model/gemm's single-threaded AVX-512 or AVX2
// kernels where the CPU has them (tidemark runs one goroutine per thread itself) and are
// gonum's own elsewhere.
func init() {
	var impl fastgemm.Implementation
	blas64.Use(impl)
	blas32.Use(impl)
	G.Use(impl)
}
