//go:build openblas

package model

// #cgo LDFLAGS: -lopenblas
import "C"

import (
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/netlib/blas/netlib"
	G "gorgonia.org/gorgonia"
)

// BLAS names the BLAS implementation the build uses, for reports.
const BLAS = "OpenBLAS (cgo, gonum.org/v1/netlib)"

// With the build tag openblas, gonum's BLAS (used by the scoring kernel and
// the masked products) and gorgonia's BLAS (the rest of the training graph)
// both call the system's OpenBLAS through cgo. Build with
//
//	go build -tags openblas ./cmd/tidemark
//
// on a machine with OpenBLAS installed (Debian: libopenblas-dev). The
// number of OpenBLAS threads follows OPENBLAS_NUM_THREADS.
func init() {
	impl := netlib.Implementation{}
	blas64.Use(impl)
	blas32.Use(impl)
	G.Use(impl)
}
