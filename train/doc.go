// Package train fits a tidemark model to a dataset: minibatch Adam (D. P.
// Kingma and J. Ba, "Adam: A Method for Stochastic Optimization", ICLR 2015)
// with optional decoupled weight decay (AdamW; I. Loshchilov and F. Hutter,
// "Decoupled Weight Decay Regularization", ICLR 2019), global-norm gradient
// clipping, a per-grid-point validation split, early stopping on the
// validation negative log-likelihood, a learning-rate schedule, held-out grid
// points, and exact resumption from a checkpoint.
//
// Determinism. Every random choice derives from the seed: the validation
// split of grid point k from (seed, k), the shuffle of epoch e from
// (seed, e), the initial weights from the seed. With the same seed and the
// same number of threads a run is bit-for-bit reproducible, and a run
// interrupted after any epoch and resumed from its checkpoint ends with the
// same weights as an uninterrupted one. Different thread counts split each
// minibatch into different chunks whose gradients are summed, so results
// then agree only up to floating-point summation order.
//
// The package also compares a model with an exact, enumerable density
// (ExhaustiveDivergence): the Kullback–Leibler divergence, the total-variation
// distance and the exact entropy at a parameter point.
package train
