package indicator

import (
	"math"
	"math/rand/v2"
)

// EvalSet is what every indicator reads: the log-likelihood matrix and, for
// each point k, the evaluation samples that carry its expectation E_k with
// their weights (1/n_k for samples, exp ℓ[m][k] for exact sums over all
// states).
type EvalSet struct {
	// Mx is ℓ[m][k].
	Mx *Matrix
	// Idx[k] lists the sample rows whose weighted mean is E_k ("slots").
	Idx [][]int
	// W[k][i] is the weight of slot i of point k; each W[k] sums to 1.
	W [][]float64
	// Exact is true when W holds exact probabilities over all states.
	Exact bool
	// Grad, if not nil, holds ∂_a log p(x|λ) at λ_k for slot i of point k,
	// at Grad[k][i·d+a]; the derivative Fisher information reads it.
	Grad [][]float64
	// xs holds the snapshots of the rows (for re-estimating a histogram).
	xs []uint8
	// tables caches posterior tables by group of points.
	tables map[string]*posteriorTable
}

// SampleWeights returns uniform weights 1/n_k over idx[k].
func SampleWeights(idx [][]int) [][]float64 {
	w := make([][]float64, len(idx))
	for k, ix := range idx {
		w[k] = make([]float64, len(ix))
		for i := range ix {
			w[k][i] = 1 / float64(len(ix))
		}
	}
	return w
}

// ExactWeights returns slots over all M rows of mx (which must list every
// state once) with weights exp ℓ[m][k], renormalised to sum to 1 at each
// point (they sum to 1 already for a normalised source; the renormalisation
// only removes round-off).
func ExactWeights(mx *Matrix) ([][]int, [][]float64) {
	all := make([]int, mx.M)
	for m := range all {
		all[m] = m
	}
	idx := make([][]int, mx.K)
	w := make([][]float64, mx.K)
	col := make([]float64, mx.M)
	for k := 0; k < mx.K; k++ {
		for m := 0; m < mx.M; m++ {
			col[m] = mx.L[m*mx.K+k]
		}
		lse := logSumExp(col)
		w[k] = make([]float64, mx.M)
		for m := range col {
			w[k][m] = math.Exp(col[m] - lse)
		}
		idx[k] = all
	}
	return idx, w
}

// BootstrapWeights returns the weights of bootstrap replicate b: the slots
// of each point are resampled with replacement (n_k draws among n_k slots),
// and a slot drawn c times weighs c/n_k. Every point uses the same stream,
// which depends only on (seed, b): points with equal n_k resample the same
// slot numbers (a paired bootstrap). Samples drawn with common random
// numbers (slot i at every point from the same uniforms) stay paired in each
// replicate, as they are in the estimate; independent samples (data at
// different points) are unaffected, since each point's resample is still a
// resample of its own independent set.
func BootstrapWeights(idx [][]int, seed uint64, b int) [][]float64 {
	return bootstrapWeightsInto(nil, idx, seed, b)
}

// bootstrapWeightsInto is BootstrapWeights writing into w when it has the
// shape of idx (a buffer reused from replicate to replicate: 10^6 slots are
// 8 MB a replicate), into new slices otherwise.
func bootstrapWeightsInto(w [][]float64, idx [][]int, seed uint64, b int) [][]float64 {
	if len(w) != len(idx) {
		w = make([][]float64, len(idx))
	}
	for k, ix := range idx {
		n := len(ix)
		if len(w[k]) != n {
			w[k] = make([]float64, n)
		} else {
			clear(w[k])
		}
		rng := rand.New(rand.NewPCG(seed^(0x9e3779b97f4a7c15*uint64(b+1)), 0))
		for j := 0; j < n; j++ {
			w[k][rng.IntN(n)] += 1 / float64(n)
		}
	}
	return w
}

// cell is one expectation Σ_{k∈ks} E_k[f]; f(k, i) is the value at slot i
// of point k.
type cell struct {
	ks []int
	f  func(k, i int) float64
}

// stat is a quantity that is a function of a few expectations: the cells,
// then combine maps their values to the output values.
type stat struct {
	cells   []cell
	nOut    int
	combine func(e, out []float64)
}

// compiled is a stat ready for replicates: its per-slot values are stored
// once, so a replicate costs one weighted sum per stored value.
type compiled struct {
	ks      [][]int
	vals    [][][]float64 // [cell][j over ks][slot]
	nOut    int
	combine func(e, out []float64)
}

// direct evaluates st under weights w.
func (st *stat) direct(w [][]float64) []float64 {
	e := make([]float64, len(st.cells))
	for c, cl := range st.cells {
		s := 0.0
		for _, k := range cl.ks {
			for i, wi := range w[k] {
				if wi != 0 {
					s += wi * cl.f(k, i)
				}
			}
		}
		e[c] = s
	}
	out := make([]float64, st.nOut)
	st.combine(e, out)
	return out
}

// compile stores the per-slot values of st.
func (st *stat) compile(w [][]float64) *compiled {
	cp := &compiled{nOut: st.nOut, combine: st.combine}
	for _, cl := range st.cells {
		v := make([][]float64, len(cl.ks))
		for j, k := range cl.ks {
			v[j] = make([]float64, len(w[k]))
			for i := range w[k] {
				v[j][i] = cl.f(k, i)
			}
		}
		cp.ks = append(cp.ks, cl.ks)
		cp.vals = append(cp.vals, v)
	}
	return cp
}

// eval evaluates a compiled stat under weights w.
func (cp *compiled) eval(w [][]float64) []float64 {
	e := make([]float64, len(cp.vals))
	for c, v := range cp.vals {
		s := 0.0
		for j, k := range cp.ks[c] {
			wk := w[k]
			for i, x := range v[j] {
				if wk[i] != 0 {
					s += wk[i] * x
				}
			}
		}
		e[c] = s
	}
	out := make([]float64, cp.nOut)
	cp.combine(e, out)
	return out
}
