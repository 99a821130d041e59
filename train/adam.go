package train

import (
	"math"
	"sync"
)

// Adam is the Adam optimiser of Kingma & Ba (ICLR 2015, Algorithm 1) over a
// list of weight slices, with optional decoupled weight decay as in AdamW
// (Loshchilov & Hutter, ICLR 2019). Its whole state is plain slices and
// numbers so a checkpoint can store it.
type Adam struct {
	// Beta1 and Beta2 are the exponential decay rates of the moment
	// estimates; Eps is the ε added to the denominator.
	Beta1, Beta2, Eps float64
	// WeightDecay is the decoupled decay rate λ: each step multiplies a
	// decayed weight by (1 − lr·λ) besides the Adam update. Zero disables it.
	WeightDecay float64
	// Decay marks which weight slices are decayed (common practice: the
	// matrices, not the biases). Nil means all.
	Decay []bool
	// Step is the number of updates done so far (t in Kingma & Ba).
	Step int
	// M and V are the first- and second-moment estimates, one slice per
	// weight slice.
	M, V [][]float64
	// active lists, per weight slice, the runs [lo, hi) of entries that can
	// change (nil: all of them); see SetActive.
	active [][][2]int
}

// SetActive tells the optimiser which entries of each weight slice can
// change: the runs [lo, hi) of runs[i] (model.ActiveRuns), nil for a whole
// slice. An entry outside them must have weight, gradient and moments 0
// at every step, as the entries outside a MADE mask do; the step then
// leaves it 0, so skipping it changes no bit of the result and saves its
// memory traffic (the step is memory bound: about half of a MADE's
// entries lie outside its masks). Slices with weight decay are updated
// whole.
func (a *Adam) SetActive(runs [][][2]int) { a.active = runs }

// NewAdam returns an optimiser for weight slices of the given lengths with
// zero moments.
func NewAdam(sizes []int, beta1, beta2, eps, weightDecay float64) *Adam {
	a := &Adam{Beta1: beta1, Beta2: beta2, Eps: eps, WeightDecay: weightDecay}
	a.M = make([][]float64, len(sizes))
	a.V = make([][]float64, len(sizes))
	for i, n := range sizes {
		a.M[i] = make([]float64, n)
		a.V[i] = make([]float64, n)
	}
	return a
}

// Update applies one step with learning rate lr to the weights w given the
// gradient g (same shapes as M):
//
//	m ← β1 m + (1−β1) g,  v ← β2 v + (1−β2) g²,
//	w ← w − lr·( m/(1−β1^t) / (√(v/(1−β2^t)) + ε) + λ w ).
func (a *Adam) Update(w, g [][]float64, lr float64) {
	a.UpdateThreads(w, g, lr, 1)
}

// UpdateThreads is Update with the entries of every slice split over
// threads goroutines. Each entry is updated on its own, so the result is
// the same for every thread count.
func (a *Adam) UpdateThreads(w, g [][]float64, lr float64, threads int) {
	a.Step++
	t := float64(a.Step)
	bc1 := 1 - math.Pow(a.Beta1, t)
	bc2 := 1 - math.Pow(a.Beta2, t)
	if threads <= 1 {
		a.update(w, g, lr, bc1, bc2, 0, 1)
		return
	}
	var wg sync.WaitGroup
	for k := 1; k < threads; k++ {
		wg.Add(1)
		go func() { defer wg.Done(); a.update(w, g, lr, bc1, bc2, k, threads) }()
	}
	a.update(w, g, lr, bc1, bc2, 0, threads)
	wg.Wait()
}

// adamChunk is the number of consecutive entries of a slice one thread
// updates before the next thread's turn.
const adamChunk = 4096

// update applies the step to part k of parts of every slice: the chunks
// of adamChunk entries c with c mod parts = k. Interleaving the chunks,
// rather than giving each thread one contiguous range, balances the work:
// the entries that cost a square root and divisions (inside a MADE
// weight's mask) crowd into the first rows of each matrix.
func (a *Adam) update(w, g [][]float64, lr, bc1, bc2 float64, k, parts int) {
	for i := range w {
		decay := a.WeightDecay != 0 && (a.Decay == nil || a.Decay[i])
		if i < len(a.active) && a.active[i] != nil && !decay {
			// The runs are cut into pieces of at most adamChunk entries,
			// dealt to the parts in turn.
			p := 0
			for _, r := range a.active[i] {
				for lo := r[0]; lo < r[1]; lo += adamChunk {
					if p%parts == k {
						hi := min(lo+adamChunk, r[1])
						adamSlice(w[i][lo:hi], g[i][lo:hi], a.M[i][lo:hi], a.V[i][lo:hi], a.Beta1, a.Beta2, a.Eps, lr, bc1, bc2, 0, false)
					}
					p++
				}
			}
			continue
		}
		n := len(g[i])
		size, stride := adamChunk, adamChunk*parts
		if parts == 1 {
			size, stride = n, max(n, 1)
		}
		for lo := k * size; lo < n; lo += stride {
			hi := min(lo+size, n)
			adamSlice(w[i][lo:hi], g[i][lo:hi], a.M[i][lo:hi], a.V[i][lo:hi], a.Beta1, a.Beta2, a.Eps, lr, bc1, bc2, lr*a.WeightDecay, decay)
		}
	}
}

// adamSliceGo is the Adam step of one slice (wd = lr·λ, used when decay
// is set): the default build's loop (adam_goloops.go) and the reference of
// the openblas build's C loop (adam_openblas.c), which gives the same
// moments and a step that differs in the last bits only.
func adamSliceGo(wi, gi, mi, vi []float64, b1, b2, eps, lr, bc1, bc2, wd float64, decay bool) {
	wi, mi, vi = wi[:len(gi)], mi[:len(gi)], vi[:len(gi)]
	for j, gj := range gi {
		if gj == 0 && !decay && mi[j] == 0 && vi[j] == 0 {
			// The step would be exactly 0 and the moments stay 0: the
			// entries outside a weight's mask, whose gradient is
			// always 0, cost no square root and division.
			continue
		}
		mj := b1*mi[j] + (1-b1)*gj
		vj := b2*vi[j] + (1-b2)*gj*gj
		mi[j], vi[j] = mj, vj
		step := lr * (mj / bc1) / (math.Sqrt(vj/bc2) + eps)
		if decay {
			step += wd * wi[j]
		}
		wi[j] -= step
	}
}

// sumSquaresGo is Σ v² over g in order: the default build's loop
// (adam_goloops.go) and the reference of the openblas build's C loop.
func sumSquaresGo(g []float64) float64 {
	s := 0.0
	for _, v := range g {
		s += v * v
	}
	return s
}

// ClipGlobalNorm scales g so that its global L2 norm (over all slices) is
// at most maxNorm, and returns the norm before scaling. maxNorm ≤ 0 only
// measures.
func ClipGlobalNorm(g [][]float64, maxNorm float64) float64 {
	s := 0.0
	for _, gi := range g {
		s += sumSquares(gi)
	}
	norm := math.Sqrt(s)
	if maxNorm > 0 && norm > maxNorm {
		f := maxNorm / norm
		for _, gi := range g {
			for j := range gi {
				gi[j] *= f
			}
		}
	}
	return norm
}
