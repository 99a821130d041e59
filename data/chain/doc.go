// Package chain generates snapshot data of quantum spin-1/2 chains and acts
// as their exact density source.
//
// A Hamiltonian is given in tidemark's text form (see Parse): a sum of
// translation-invariant Pauli words with coefficients built from numbers and
// control parameters. For each parameter point the ground state is found by
// restarted Lanczos with full reorthogonalisation, matrix-free on the 2^N
// amplitudes (real arithmetic when the Hamiltonian is real, complex
// otherwise), optionally inside one sector of the global spin flip ∏X.
// Snapshots are projective measurements of that state, drawn by the Born
// rule, in one fixed Pauli basis for all sites or in a uniformly random
// Pauli basis per site and shot.
//
// Beyond exact diagonalisation (more than MaxSites sites) MPSSource holds
// each ground state as a matrix-product state from two-site DMRG (package
// mps): snapshots are drawn by perfect sampling, independently, and their
// exact probabilities come from the MPS, so an MPS dataset keeps an exact
// density source. Its ∏X sector is enforced by projecting the DMRG state,
// and an optional pinning field fixes edge-mode degeneracies.
//
// # Internal state convention
//
// Basis state index b has bit j set when site j is |↓⟩ (Z = −1); bit 0 is
// |↑⟩ (Z = +1). Amplitude b of a state vector is ⟨b|ψ⟩.
//
// # Stored snapshot values
//
// Stored values follow tidemark's Ising convention (eigenvalue −1 stored as
// 0, eigenvalue +1 stored as 1):
//
//   - basis z, x or y (alphabet 2): site value 1 when the measured Pauli
//     operator gave +1, 0 when it gave −1;
//   - basis random (alphabet 6): site value 2·basis + outcome, with basis
//     0 = X, 1 = Y, 2 = Z chosen uniformly and independently for every site
//     and shot, and outcome 1 for +1, 0 for −1. The probability of a stored
//     snapshot includes the (1/3)^N probability of its bases, so the random
//     basis data are informationally complete and LogProb is a proper
//     distribution over all 6^N values.
//
// A Y measurement rotates the site by S† and then the Hadamard gate H, so that
// the Y = +1 eigenstate (|↑⟩ + i|↓⟩)/√2 maps to |↑⟩; an X measurement
// rotates by H.
package chain
