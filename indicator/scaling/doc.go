// Package scaling extrapolates the indicator peaks of a series of finite
// systems to the infinite system (finite-size scaling).
//
// The position of an indicator's peak on a system of linear size L moves
// with L as
//
//	λ*(L) = λ_c + a·L^(−1/ν) [+ Σ_k b_k·L^(−1/ν−k·ω)],
//
// the leading shift of a pseudo-critical point (M. E. Fisher and M. N.
// Barber, Phys. Rev. Lett. 28, 1516 (1972)) and its corrections; FitPeaks
// fits it by weighted least squares, choosing the corrections from the data
// on request and reporting a statistical and a systematic error, Combine
// merges the indicators' estimates, Run reads a set of scan folders, Write
// writes the extrapolation folder (summary.json, pictures of the fits and of
// the data collapse, report.html) and Result.Section gives the same as a
// section for another page. Sizes and SeriesPath serve commands that write
// one dataset per size.
package scaling
