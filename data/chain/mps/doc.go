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
// All tensors are real. A complex Hamiltonian (a Pauli word with an odd
// number of Y letters) is embedded as a real operator on the chain and one
// ancilla site that holds the real and imaginary parts of the state (see
// BuildMPO); the measurement code contracts the ancilla with (1, i), and
// measurements in the X and Y bases are done in complex arithmetic there.
package mps
