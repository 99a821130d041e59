// Package vmath holds tidemark's vectorised elementwise functions of the
// model's hot loops: softplus log(1+e^x) and the logistic function σ(x)
// times a gradient, over slices. On amd64 with AVX2 and FMA they run in
// assembly, four values per instruction; elsewhere, with the build tag
// purego, and for the last values of a slice that do not fill a vector,
// the same formulas run in Go.
//
// Both use fdlibm's argument reduction and polynomial for log(1+e)
// (Sun Microsystems, 1993; the constants of Go's math/log.go) and a
// degree-13 Taylor polynomial of e^r on |r| ≤ ln 2/2 after reducing
// e^−|x| = 2^−k e^r; they agree with the straightforward formulas
// log1p(exp(x)) and 1/(1+exp(−x)) to a few units in the last place
// (TestSoftplus, TestSigmoidMul), not bit for bit.
package vmath
