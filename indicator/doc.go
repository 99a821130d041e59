// Package indicator computes Bayes-optimal phase-transition indicators from a
// density source p(x|λ): the log-likelihood matrix ℓ[m][k] = log p(x_m|λ_k),
// the indicators built from it (sl, lbc, pbm, local, fisher), their bootstrap
// errors and peaks, and 2-D boundaries. Package indicator/report writes the
// files and pictures of a scan.
//
// Every indicator takes a Source and never asks what it is: exact
// enumerations, the histogram of the data (Histogram) and trained models all
// implement it.
//
// # One matrix
//
// Every indicator is a function of expectations E_k[f] = Σ_m W[k][m] f(x_m)
// of per-sample quantities f computed from ℓ alone (posteriors with
// log-sum-exp, robust to −Inf). The weights are 1/n_k over the samples of
// point k, or exp ℓ[m][k] over all q^N states with exact sums. A bootstrap
// replicate only changes the weights (resampling the samples within each
// point), so ℓ is computed once and a replicate costs one weighted sum per
// stored per-sample value, O(M·K). The histogram is the exception: its
// frequencies are re-estimated from each resample. The derivative Fisher
// information F = E_k[(∂_λ log p)²] averages over the data's snapshots at
// the data's grid points and over snapshots drawn from the source at
// refined or zoomed points.
//
// # Errors and peaks
//
// A curve's error is the standard deviation of its bootstrap replicates;
// with several sources (models trained with different seeds) the curves are
// averaged, each replicate of the average uses the same resampled data for
// every source, and the sample standard deviation across sources is added in
// quadrature. Peaks are interior local maxima whose height above the higher
// neighbouring minimum exceeds twice its bootstrap error (the spread of that
// difference over the replicates; every local maximum without a bootstrap),
// refined by a parabola through the top three
// points; a peak's position error combines the spread of the refined
// position over replicates and across sources in quadrature, the highest
// peak's also the spread of where each replicate and each source has its
// own highest maximum. With Config.Unseen (a model scanned on its own data)
// every curve is also evaluated on the snapshots the model did not train
// on, and each peak's shift there beyond sampling noise joins its error
// (Peak.Unseen).
//
// # Placement
//
// sl, lbc, pbm (1-D), local and fisher (from neighbour Jensen–Shannon
// divergence) are placed at midpoints between neighbouring grid points;
// fisher_deriv and the 2-D pbm divergence at grid points. On a 2-D product
// grid, sl, lbc, local and fisher are computed along every line of each axis
// (names get the axis as a suffix, e.g. local_T); "fisher" becomes the
// trace of the metric from the divergences, at the centres of the grid's
// cells; and boundaries join each line's highest peak of the local and
// fisher maps into polylines, in both orientations.
//
// # Phases
//
// A 2-D scan also gets Result.Phases: one boundary-strength map per
// indicator (for fisher the largest eigenvalue of the metric), divided into
// phases with boundaries between them by package indicator/phases, which
// works on plain arrays; the bootstrap replicas and the per-source values of
// the curves supply its errors.
package indicator
