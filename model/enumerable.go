package model

import "math"

// MaxEnumerableStates bounds q^N for Enumerable: 2^20 states (a 4×5 Ising
// lattice), which a scan scores at every point in seconds.
const MaxEnumerableStates = 1 << 20

// Enumerable reports whether all q^N snapshots of the model may be listed
// (q^N ≤ MaxEnumerableStates). Scans then replace sample means by exact
// sums over the model's own distribution, which removes the sampling noise
// from model-based indicators and leaves only the model's misfit.
func (m *Model) Enumerable() bool {
	return math.Pow(float64(m.Cfg.Alphabet), float64(m.Cfg.Sites)) <= MaxEnumerableStates
}
