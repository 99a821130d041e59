// Package mps holds real matrix-product states and operators for spin-1/2
// chains: a matrix-product operator built from Pauli terms by a
// finite-state-automaton construction, two-site DMRG ground states (S. R.
// White, Phys. Rev. Lett. 69, 2863 (1992); U. Schollwöck, Ann. Phys. 326, 96
// (2011)), exact outcome probabilities of product measurements and perfect
// sampling of independent snapshots (A. J. Ferris and G. Vidal, Phys. Rev. B
// 85, 165146 (2012)).
//
// # Conventions
//
// Physical index 0 is |↑⟩ (Z = +1) and 1 is |↓⟩ (Z = −1), as in package
// chain. A site tensor A[j] has shape (left bond, 2, right bond), stored
// row-major. Measurement bases are numbered 0 = X, 1 = Y, 2 = Z and an
// outcome is 0 for eigenvalue +1 and 1 for −1, again as in package chain.
//
// All tensors are real: the operator must be real, which holds exactly when
// every Pauli word has an even number of Y letters (Y = i·Ỹ with Ỹ real).
// Measurements in the Y basis are complex and are handled in the sampling
// code alone.
package mps
