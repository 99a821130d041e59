// Package study runs tidemark's whole job as one computation and states
// its answer: Scan runs the indicators of a dataset until done or
// cancelled, Answer chooses which indicator's peak is the estimate of a
// transition, and Demo simulates a built-in Ising scenario, trains a model
// on it, scans it, compares the estimate with exact results of the same
// finite lattice (Kaufman) and of the infinite one (Onsager) and writes a
// report folder.
package study
