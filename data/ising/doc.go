// Package ising generates and describes snapshots of the two-dimensional
// Ising model on a periodic Ly×Lx square lattice,
//
//	H = −Jx Σ s_i s_{i+x̂} − Jy Σ s_i s_{i+ŷ} − h Σ s_i,   at temperature T (k_B = 1).
//
// It holds three things that share the same conventions (site (y,x) is
// y*Lx+x, spin s = −1 stored 0 and s = +1 stored 1):
//
//   - Enumeration: enumeration of all 2^N states for N ≤ 24 sites, giving ln Z,
//     exact probabilities, moments, the density of states and exact
//     independent samples; Source adapts it to tidemark's density-source
//     interfaces so indicators can be checked against the exact answer.
//   - Kaufman's exact partition function of the finite periodic lattice
//     (B. Kaufman, Phys. Rev. 76, 1232 (1949)), with the energy and heat
//     capacity from its analytic temperature derivatives: the reference for
//     lattices too large to enumerate.
//   - A Monte Carlo sampler (Wolff clusters at h = 0, checkerboard Metropolis
//     otherwise) whose samples are spaced by twice the integrated
//     autocorrelation time measured during burn-in.
//
// On a lattice with a side of length 2 the periodic boundary joins the same
// pair of sites twice, so that bond counts twice; every part of the package
// (and Kaufman's formula) uses that convention.
package ising
