// Package check compares a trained density with the exact distribution of
// the system a dataset was generated from, point by point over the dataset's
// grid and the points held out in training.
//
// Where all q^N states can be listed (Enumerate), it sums the exact
// Kullback–Leibler divergence KL(p_exact‖p_model) and the total-variation
// distance over every state, and estimates KL from the dataset's samples as
// the model's mean negative log-likelihood minus the exact entropy. For a
// zero-field Ising lattice too large to enumerate (Kaufman), the exact
// entropy from Kaufman's partition function (B. Kaufman, Phys. Rev. 76, 1232
// (1949)) still gives that sample estimate. The reports render themselves as
// text tables and have stable JSON keys.
package check
