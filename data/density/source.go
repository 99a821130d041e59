package density

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
// exact-sum indicators and ExhaustiveDivergence use it.
type Enumerable interface {
	Source
	// Enumerable reports whether all q^N states may be listed.
	Enumerable() bool
}

// MatrixSource is a Source that scores many snapshots at many parameter
// points at once, faster than repeated LogProb calls (a trained model
// batches its conditioning this way). The result holds log p(x_m|λ_k) at
// index m·len(lambdas)+k, n rows of xs.
type MatrixSource interface {
	Source
	LogProbMatrix(xs []uint8, n int, lambdas [][]float64, threads int) ([]float64, error)
}

// GridOnly is a Source defined only at the grid points of its data (the
// histogram): derivatives in λ and refinement are not available for it.
type GridOnly interface {
	Source
	// GridOnly reports whether the source exists only at grid points.
	GridOnly() bool
}

// IsGridOnly reports whether s declares itself defined only at grid points.
func IsGridOnly(s Source) bool {
	gs, ok := s.(GridOnly)
	return ok && gs.GridOnly()
}

// IsEnumerable reports whether s declares that all its states may be listed.
func IsEnumerable(s Source) bool {
	e, ok := s.(Enumerable)
	return ok && e.Enumerable()
}

// Resampler is a Source estimated from the very snapshots it scores (the
// histogram's frequencies). A bootstrap re-estimates it from each resample,
// so that the errors include the source's own sampling noise.
type Resampler interface {
	Source
	// Resampled prepares the re-estimation for the n snapshots xs, of which
	// idx[k] lists the rows that estimate point k. The function it returns
	// gives, under weights w[k][i] of the rows idx[k][i], the row-major n×K
	// matrix log p̂(x_m|λ_k) of the re-estimated source (−Inf for a state
	// with no weight at k).
	Resampled(xs []uint8, n int, idx [][]int) func(w [][]float64) []float64
}

// EntropySource is a Source that knows its exact entropy −Σ p ln p at any λ
// without listing its states (the zero-field Ising model from Kaufman's
// partition function), against which a model's cross-entropy measures its
// misfit.
type EntropySource interface {
	Source
	// EntropyPerSite returns the entropy at lambda in nats per site (the
	// entropy of a snapshot divided by N).
	EntropyPerSite(lambda []float64) (float64, error)
}

// AllStates lists the first M of the q^N states of N sites, one row of N
// values each, in the order of the base-q numbers they spell with the first
// site most significant (M = q^N lists them all).
func AllStates(q, N, M int) []uint8 {
	xs := make([]uint8, M*N)
	for m := 0; m < M; m++ {
		v := m
		for j := N - 1; j >= 0; j-- {
			xs[m*N+j] = uint8(v % q)
			v /= q
		}
	}
	return xs
}
