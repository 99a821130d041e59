// Package data holds tidemark's dataset: snapshots of a many-body system
// (states, uint8 M×N), the control parameters of each snapshot (params,
// float64 M×d) and a JSON meta object, stored as one NumPy .npz archive.
//
// It reads and validates such files, writes them atomically, and derives the
// grid: the distinct parameter points, their per-axis values, whether they
// form a product grid, and which samples belong to each point. It also parses
// the grid specification language of the --grid flag. Generators of
// synthetic data live in sub-packages (data/ising, data/chain).
package data
