// Package density holds the contract that joins tidemark's generators,
// models and indicators: a Source is a conditional distribution p(x|λ) over
// snapshots, a Sampler can also draw from it, and a consumer that needs more
// asks for an optional capability by interface (Enumerable, MatrixSource,
// GridOnly, Resampler, EntropySource, Symmetric), never for a concrete type,
// as io.Copy asks for a WriterTo.
//
// The package also keeps the registry of exact references that generators
// fill from their init functions (RegisterReference, ReferenceFor), the
// exhaustive comparison of two enumerable sources (ExhaustiveDivergence:
// Kullback–Leibler divergence, total variation, entropy) and the
// histogram source of empirical frequencies. It imports only package data
// (and data/textenum for its Symmetry enumeration); generators (data/ising, data/chain) import data and density, and the
// analysis packages (indicator, train) consume sources through it.
//
// Package densitytest holds the conformance check any source can run and the
// shared fake sources of the tests.
package density
