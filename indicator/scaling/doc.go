// Package scaling extrapolates the indicator peaks of a series of finite
// systems to the infinite system (finite-size scaling).
//
// The position of an indicator's peak on a system of linear size L moves
// with L as
//
//	λ*(L) = λ_c + a·L^(−1/ν) [+ b·L^(−1/ν−ω)],
//
// the leading shift of a pseudo-critical point (M. E. Fisher and M. N.
// Barber, Phys. Rev. Lett. 28, 1516 (1972)); FitPeaks fits it by weighted
// least squares, Combine merges the indicators' estimates, Run reads a set of
// scan folders and Write writes the extrapolation folder (summary.json,
// pictures of the fits and of the data collapse, report.html). Sizes and
// SeriesPath serve commands that write one dataset per size.
package scaling
