//go:build !openblas || !cgo

package model

// BLAS names the BLAS implementation the build uses, for reports: gonum's
// pure-Go BLAS unless the program was built with the tag openblas and cgo
// enabled (without cgo the tag has no effect).
const BLAS = "gonum (pure Go)"

// BLASCore returns the name of the CPU kernels OpenBLAS runs; it is empty
// in the pure-Go build.
func BLASCore() string { return "" }
