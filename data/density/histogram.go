package density

import (
	"fmt"
	"math"

	"tidemark/data"
)

// MaxDistinctFraction is the largest fraction of distinct snapshots among a
// grid point's samples that the histogram accepts: above it most snapshots
// are seen once and empirical frequencies say little about the density.
const MaxDistinctFraction = 0.5

// Histogram is the Source of empirical frequencies: p(x|λ_k) is the
// fraction of the samples at grid point k equal to x. It is defined only at
// the grid points (λ elsewhere is an error) and gives −Inf to unseen states.
type Histogram struct {
	n, q, d int
	grid    *data.Grid
	counts  []map[string]int
	totals  []int
}

// NewHistogram counts the snapshots of ds at each grid point. It refuses
// data whose snapshots are mostly distinct at some point (distinct/total >
// MaxDistinctFraction): the system is too large for a histogram.
func NewHistogram(ds *data.Dataset) (*Histogram, error) {
	g := data.NewGrid(ds)
	h := &Histogram{n: ds.N, q: ds.Meta.Alphabet, d: ds.D, grid: g}
	for k, idx := range g.Index {
		c := map[string]int{}
		for _, m := range idx {
			c[string(ds.Row(m))]++
		}
		if f := float64(len(c)) / float64(len(idx)); f > MaxDistinctFraction {
			return nil, fmt.Errorf("histogram: at %s %d of %d snapshots are distinct (more than %.0f%%), too few repeats to estimate frequencies: train a model instead", g.Label(k), len(c), len(idx), 100*MaxDistinctFraction)
		}
		h.counts = append(h.counts, c)
		h.totals = append(h.totals, len(idx))
	}
	return h, nil
}

// Sites returns N.
func (h *Histogram) Sites() int { return h.n }

// Alphabet returns q.
func (h *Histogram) Alphabet() int { return h.q }

// ParamDim returns d.
func (h *Histogram) ParamDim() int { return h.d }

// GridOnly reports true: the histogram exists only at grid points.
func (h *Histogram) GridOnly() bool { return true }

// LogProb writes log of the empirical frequency of each row of xs at the
// grid point lambda (−Inf for a snapshot not seen there).
func (h *Histogram) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	if len(xs) != len(dst)*h.n {
		return fmt.Errorf("histogram: expected %d snapshot values, found %d", len(dst)*h.n, len(xs))
	}
	if len(lambda) != h.d {
		return fmt.Errorf("histogram: expected %d parameters, found %d", h.d, len(lambda))
	}
	k := h.grid.Find(lambda)
	if k < 0 {
		return fmt.Errorf("histogram: %s is not a grid point of the data; the histogram exists only at the %d grid points (train a model to evaluate between them)", data.FormatPoint(h.grid.Names, lambda), h.grid.K())
	}
	lt := math.Log(float64(h.totals[k]))
	for m := range dst {
		c := h.counts[k][string(xs[m*h.n:(m+1)*h.n])]
		if c == 0 {
			dst[m] = math.Inf(-1)
		} else {
			dst[m] = math.Log(float64(c)) - lt
		}
	}
	return nil
}

// Resampled returns the histogram re-estimated from weighted snapshots:
// under weights w it gives ℓ[m][k] = log Σ_{rows i of idx[k] with the state
// of row m} w[k][i], the frequency of row m's state among point k's
// weighted snapshots (−Inf when absent). Under the base weights 1/n_k it
// equals the histogram's own matrix; under bootstrap weights it is the
// histogram of the resampled data. The distinct snapshots are numbered once.
func (h *Histogram) Resampled(xs []uint8, n int, idx [][]int) func(w [][]float64) []float64 {
	ids, nIDs := stateIDs(xs, n, h.n)
	return func(w [][]float64) []float64 { return empiricalLogFreq(ids, nIDs, idx, w) }
}

// stateIDs numbers the distinct snapshots among the n rows of xs.
func stateIDs(xs []uint8, n, N int) ([]int, int) {
	ids := make([]int, n)
	seen := map[string]int{}
	for m := 0; m < n; m++ {
		s := string(xs[m*N : (m+1)*N])
		id, ok := seen[s]
		if !ok {
			id = len(seen)
			seen[s] = id
		}
		ids[m] = id
	}
	return ids, len(seen)
}

// empiricalLogFreq is the row-major M×K matrix of log frequencies of each
// row's state among point k's weighted slots (see Resampled).
func empiricalLogFreq(ids []int, nIDs int, idx [][]int, w [][]float64) []float64 {
	K := len(idx)
	M := len(ids)
	L := make([]float64, M*K)
	freq := make([]float64, nIDs)
	for k := 0; k < K; k++ {
		for i := range freq {
			freq[i] = 0
		}
		for i, m := range idx[k] {
			freq[ids[m]] += w[k][i]
		}
		for m := 0; m < M; m++ {
			if f := freq[ids[m]]; f > 0 {
				L[m*K+k] = math.Log(f)
			} else {
				L[m*K+k] = math.Inf(-1)
			}
		}
	}
	return L
}
