//go:build !openblas || !cgo

package train

import "tidemark/model/vmath"

// adamSlice is the Adam step of one slice; the default build runs
// vmath.Adam (AVX2 assembly on amd64, the same bits as adamSliceGo;
// TestAdamSliceMatchesGo), the openblas build a vectorised C loop
// (adam_openblas.go).
func adamSlice(wi, gi, mi, vi []float64, b1, b2, eps, lr, bc1, bc2, wd float64, decay bool) {
	vmath.Adam(wi, gi, mi, vi, b1, b2, eps, lr, bc1, bc2, wd, decay)
}

// sumSquares is Σ v² over g, by the Go loop.
func sumSquares(g []float64) float64 { return sumSquaresGo(g) }
