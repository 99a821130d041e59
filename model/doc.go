// Package model is the parameter-conditioned autoregressive density p(x|λ)
// of tidemark: a categorical masked autoencoder for distribution estimation
// (MADE; M. Germain, K. Gregor, I. Murray and H. Larochelle, "MADE: Masked
// Autoencoder for Distribution Estimation", ICML 2015) over N sites with q
// states each, whose hidden and output layers receive an additive bias
// computed by a small dense network from the control parameters λ.
//
// The model has two implementations of one function: a gorgonia graph
// (Graph) used only for training, which gives the mean negative
// log-likelihood and its gradient by automatic differentiation, and a
// forward-only scoring kernel on gonum BLAS (LogProb, LogProbMatrix, Sample)
// used by everything that scores. Both read the same weights (Model.Weights)
// and agree to rounding. The factorisation p(x|λ) = Π_i p(x_{o_i}|x_{o_<i}, λ)
// over the site ordering o (Config.Order) makes every probability exactly
// normalised, and ancestral sampling exact.
//
// Config and the []Tensor weights are plain Go values, so checkpoints can
// store and restore a model without knowing gorgonia.
package model
