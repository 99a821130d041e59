// Package posterior turns log-likelihoods of snapshots over a grid of
// parameter points into posteriors over that grid: "which parameters did
// these snapshots come from?".
//
// With a uniform prior over the K grid points λ_1..λ_K, the posterior of one
// snapshot x is
//
//	π_k(x) = p(x|λ_k) / Σ_j p(x|λ_j),
//
// and the posterior of a group of snapshots x_1..x_n assumed to share one λ
// is the product of their likelihoods, normalised over the grid:
//
//	π_k(x_1..x_n) ∝ Π_i p(x_i|λ_k),
//
// computed in log space (sums of log-likelihoods, then log-sum-exp) so that
// thousands of snapshots do not underflow. Summaries are per axis: the
// marginal over the other axes, its maximum, mean, standard deviation and a
// central (equal-tailed) credible interval, found by spreading each grid
// value's mass evenly over its cell (half-way to its neighbours). The grid
// limits the resolution: a posterior narrower than the grid spacing cannot
// be resolved, and one that reaches an end of the grid may be cut off by it.
package posterior
