//go:build openblas && cgo

package model

// #cgo LDFLAGS: -lopenblas
// void openblas_set_num_threads(int num_threads);
import "C"

import (
	"os"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/netlib/blas/netlib"
	G "gorgonia.org/gorgonia"
)

// BLAS names the BLAS implementation the build uses, for reports.
const BLAS = "OpenBLAS (cgo, gonum.org/v1/netlib)"

// With the build tag openblas, gonum's BLAS (the scoring kernel and the
// masked products) and gorgonia's BLAS (the rest of the training graph)
// both call the system's OpenBLAS through cgo. Build with
//
//	go build -tags openblas ./cmd/tidemark
//
// on a machine with OpenBLAS installed (Debian: libopenblas-dev). tidemark
// parallelises over goroutines itself (one per thread), so OpenBLAS is set
// to one thread unless OPENBLAS_NUM_THREADS says otherwise.
func init() {
	impl := netlib.Implementation{}
	blas64.Use(impl)
	blas32.Use(impl)
	G.Use(impl)
	if os.Getenv("OPENBLAS_NUM_THREADS") == "" {
		C.openblas_set_num_threads(1)
	}
}
