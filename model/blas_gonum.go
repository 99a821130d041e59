//go:build !openblas

package model

// BLAS names the BLAS implementation the build uses, for reports: gonum's
// pure-Go BLAS unless the program was built with the tag openblas.
const BLAS = "gonum (pure Go)"
