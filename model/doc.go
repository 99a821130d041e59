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
// Convolutional models. With Config.Conv set the model is instead a masked
// convolutional network on a periodic 2-D lattice (ConvConfig; van den
// Oord et al., ICML 2016; Wu, Wang and Zhang, Phys. Rev. Lett. 122, 080602
// (2019)): the same autoregressive factorisation in row-major order and
// the same per-channel FiLM conditioning, but each layer's weights are
// shared across lattice translations and read only a window of earlier
// sites, so the weight count does not grow with the lattice. Its
// operations are hand-written (conv.go, conv_ops.go): a layer gathers the
// window of every site into a matrix (im2col) and multiplies it by the
// weights with one GEMM; the backward pass multiplies by the transposes
// and scatters the gathered gradient back. It has no gorgonia graph
// (NewGraph refuses it); NewBatchGraph, LogProb, LogProbMatrix and Sample
// serve both kinds. Sampling computes every layer at one site at a time,
// so a draw costs one forward pass.
//
// Config and the []Tensor weights are plain Go values, so checkpoints can
// store and restore a model without knowing gorgonia.
//
// Layout. For q = 2 each site is one input (its value 0/1) and one logit
// (Bernoulli); for q > 2 a site is q one-hot inputs and q logits (softmax),
// at columns s·q+v. A site at autoregressive position i (Order[i] = s) has
// degree i+1; hidden units get degrees 1..N−1 spread evenly and in
// ascending order; a masked weight [in, out] connects input j to unit k when
// deg(k) ≥ deg(j) in hidden layers, and deg(out) > deg(in) into the output
// layer and in the direct connection (Germain et al. 2015). The weights, in
// the order of Model.Weights (see WeightNames), are cond.wC and cond.bC per
// conditioning layer, then made.wL, made.bL and the conditioning head
// cond.vL per masked layer L (hidden layers, then the output layer), then
// made.direct when Config.Direct is set. Both implementations multiply the
// weights by the masks on every use, so entries outside the masks never
// matter.
//
// Performance. Hidden units are sorted by degree, so every mask is block
// triangular: both implementations split each masked product into blocks of
// 64 columns and multiply only the rows that hold a nonzero mask entry
// (about half the work of a dense product). In the training graph these
// products, the conditioning heads and the layer biases are hand-written
// gorgonia operations (forward, input gradient, weight and bias gradient
// on BLAS) that reuse their buffers from step to step; gorgonia still
// builds the graph and differentiates the rest. W⊙M is prepared once per
// step for all passes; BatchGraph splits a minibatch over one graph per
// thread, prepares W⊙M once for all of them (the threads together) and
// combines their gradients in parallel. Because snapshots come from a grid
// of control parameters, the rows of a batch share few distinct λ, and the
// conditioning heads (dense products with one row per snapshot) run once per
// distinct λ of each chunk (rowGroups). Config.Precision "float32" runs
// these products in single precision while every per-site term, sum and
// gradient outside them stays float64; log-likelihoods then agree with
// float64 to about 1e-7 relative. For q = 2 the per-site terms
// x·z − log(1+e^z) take one logarithm per 512 sites (of the product of the
// factors 1+e^−|z|, which cannot overflow) instead of one per site. The
// scoring kernel streams snapshots in blocks of 64, so LogProbMatrix needs
// memory for its n·K output and a few MB besides.
//
// BLAS. The default build uses gonum's pure-Go BLAS with the matrix
// products of package model/gemm (Go assembly micro-kernels for AVX2+FMA or
// AVX-512, chosen at start-up; gonum's own elsewhere), still without cgo.
// Built with the tag openblas (CGO_ENABLED=1, OpenBLAS installed, e.g.
// Debian libopenblas-dev),
//
//	go build -tags openblas ./cmd/tidemark
//
// gonum's and gorgonia's BLAS calls go to OpenBLAS through cgo
// (gonum.org/v1/netlib); see the constant BLAS and BLASCore. Training and
// LogProbMatrix already run one goroutine per thread, so OpenBLAS is
// limited to one thread of its own unless OPENBLAS_NUM_THREADS is set.
// OpenBLAS 0.3.21 (Debian 12) does not recognise some newer CPUs and falls
// back to generic kernels with a 3–4× slower sgemm; when that happens on a
// CPU with AVX-512 or AVX2 and OPENBLAS_CORETYPE is unset, the openblas
// build selects the matching kernels itself (BLASCore then says
// "re-selected").
package model
