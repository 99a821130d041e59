package indicator

import "math/rand/v2"

// Source is a conditional distribution p(x|λ) over snapshots of N sites with
// q states each.
type Source interface {
	// Sites returns N.
	Sites() int
	// Alphabet returns q.
	Alphabet() int
	// ParamDim returns d, the length of λ.
	ParamDim() int
	// LogProb writes log p(x_m|λ) in nats for each snapshot row of xs
	// (len(xs) = len(dst)·N) into dst.
	LogProb(dst []float64, xs []uint8, lambda []float64) error
}

// Sampler is a Source that can also draw independent snapshots at any λ.
type Sampler interface {
	Source
	// Sample writes n snapshots (n·N values) drawn from p(·|λ) into dst.
	Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) error
}

// Enumerable is a Source small enough that all q^N states can be listed;
// exact-sum indicators use it.
type Enumerable interface {
	Source
	// Enumerable reports whether all q^N states may be listed.
	Enumerable() bool
}
