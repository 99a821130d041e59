//go:build openblas && cgo

package model

// #cgo LDFLAGS: -lopenblas
// #include <stdlib.h>
// #include <string.h>
// #include <strings.h>
// void openblas_set_num_threads(int num_threads);
// char* openblas_get_corename(void);
// // Present only in OpenBLAS built with DYNAMIC_ARCH (as Debian's is).
// void gotoblas_dynamic_init(void) __attribute__((weak));
// void gotoblas_dynamic_quit(void) __attribute__((weak));
//
// // tmFixCore re-selects OpenBLAS's kernels when its CPU detection fell
// // back to the generic Prescott (SSE3) kernels on a CPU that has AVX-512
// // or AVX2 — OpenBLAS 0.3.21 does so on CPUs newer than it knows, and its
// // sgemm is then 3–4× slower. It chooses as OPENBLAS_CORETYPE would, and
// // only when that variable is unset. It returns 1 if it changed the core.
// static int tmFixCore(void) {
// 	if (getenv("OPENBLAS_CORETYPE") != NULL || !gotoblas_dynamic_init || !gotoblas_dynamic_quit) return 0;
// 	const char *c = openblas_get_corename();
// 	if (c == NULL || strcasecmp(c, "Prescott") != 0) return 0;
// 	__builtin_cpu_init();
// 	const char *want = NULL;
// 	if (__builtin_cpu_supports("avx512f") && __builtin_cpu_supports("avx512bw") &&
// 	    __builtin_cpu_supports("avx512dq") && __builtin_cpu_supports("avx512vl")) {
// 		want = "SkylakeX";
// 	} else if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma")) {
// 		want = "Haswell";
// 	}
// 	if (want == NULL) return 0;
// 	setenv("OPENBLAS_CORETYPE", want, 1);
// 	gotoblas_dynamic_quit();
// 	gotoblas_dynamic_init();
// 	return 1;
// }
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

// blasCoreFixed records that init re-selected OpenBLAS's kernels.
var blasCoreFixed bool

// BLASCore returns the name of the CPU kernels OpenBLAS runs (as in
// OPENBLAS_CORETYPE, e.g. "SkylakeX"), followed by " (re-selected)" when
// tidemark replaced OpenBLAS's generic fallback; it is empty in the pure-Go
// build.
func BLASCore() string {
	s := C.GoString(C.openblas_get_corename())
	if blasCoreFixed {
		s += " (re-selected)"
	}
	return s
}

// With the build tag openblas, gonum's BLAS (the scoring kernel and the
// masked products) and gorgonia's BLAS (the rest of the training graph)
// both call the system's OpenBLAS through cgo. Build with
//
//	go build -tags openblas ./cmd/tidemark
//
// on a machine with OpenBLAS installed (Debian: libopenblas-dev). tidemark
// parallelises over goroutines itself (one per thread), so OpenBLAS is set
// to one thread unless OPENBLAS_NUM_THREADS says otherwise. When OpenBLAS
// fell back to its generic kernels on a CPU with AVX2 or AVX-512 (and
// OPENBLAS_CORETYPE is unset), the matching kernels are selected instead.
func init() {
	blasCoreFixed = C.tmFixCore() == 1
	impl := netlib.Implementation{}
	blas64.Use(impl)
	blas32.Use(impl)
	G.Use(impl)
	if os.Getenv("OPENBLAS_NUM_THREADS") == "" {
		C.openblas_set_num_threads(1)
	}
}
