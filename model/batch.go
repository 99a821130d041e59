package model

import (
	"fmt"
	"sync"
)

// BatchGraph splits each training batch over several Graphs, one per
// thread, run on their own goroutines. Their masked weights W⊙M are
// prepared once per step (by all threads together) into buffers the graphs
// share, and the chunk gradients are combined by all threads together. With
// one thread it is one Graph and no combination, so results do not depend
// on anything but the inputs. A BatchGraph is not safe for concurrent use.
type BatchGraph struct {
	m      *Model
	batch  int
	graphs []*Graph
	// grads are the private gradient arrays of graphs 1… when there are
	// several (grads[0] is nil): graph 0 writes into the caller's arrays,
	// which the combination then updates in place, saving a copy of every
	// weight (134 MB for the direct connection at 4096 sites).
	grads  [][][]float64
	losses []float64
	errs   []error
	jobs   [][]prepJob // per thread: the column blocks it prepares
	// deferred[w], when set, are the float32 products of weight w in each
	// graph, whose float32 gradients LossGrad combines itself.
	deferred [][]*maskedLinear
	// conv replaces the graphs for a convolutional model.
	conv *convBatch
}

// combineRows is the number of consecutive weight rows one thread
// combines before the next thread's turn.
const combineRows = 16

// prepJob is the column blocks c0..c1−1 of the masked weight w.
type prepJob struct {
	ml     *maskedLinear
	w      int
	c0, c1 int
}

// NewBatchGraph builds threads graphs (at most batch) of m for batches of
// at most batch snapshots, each taking an equal share of a batch.
func NewBatchGraph(m *Model, batch, threads int) (*BatchGraph, error) {
	if m == nil {
		return nil, fmt.Errorf("model: NewBatchGraph needs a model, found nil")
	}
	if batch < 1 {
		return nil, fmt.Errorf("model: NewBatchGraph needs a batch size ≥ 1, found %d", batch)
	}
	if threads < 1 {
		return nil, fmt.Errorf("model: NewBatchGraph needs at least 1 thread, found %d", threads)
	}
	if m.conv != nil {
		return &BatchGraph{m: m, batch: batch, conv: newConvBatch(m, batch, threads)}, nil
	}
	T := min(threads, batch)
	per := (batch + T - 1) / T
	bg := &BatchGraph{m: m, batch: batch, losses: make([]float64, T), errs: make([]error, T)}
	for t := 0; t < T; t++ {
		g, err := NewGraph(m, per)
		if err != nil {
			return nil, err
		}
		bg.graphs = append(bg.graphs, g)
	}
	if T == 1 {
		return bg, nil
	}
	// All graphs read the W⊙M buffers of the first, which the threads
	// prepare together, split by column blocks in proportion to their work.
	// Their weight gradients go to private arrays, so the zeros outside
	// the mask blocks are written only once.
	g0 := bg.graphs[0]
	bg.deferred = make([][]*maskedLinear, len(m.Weights))
	for w, mls := range g0.byWeight {
		// A float32 weight read by one product per graph: the chunks'
		// float32 gradients are combined without widening each first.
		if len(mls) == 1 && mls[0].f32 {
			for _, g := range bg.graphs {
				ml := g.byWeight[w][0]
				ml.defer32 = true
				bg.deferred[w] = append(bg.deferred[w], ml)
			}
		}
	}
	for t, g := range bg.graphs {
		g.prepared = true
		for _, mls := range g.byWeight {
			for _, ml := range mls {
				// Graph 0 writes the caller's arrays, which the caller may
				// change between calls: it writes their zeros every time.
				ml.privDst = t > 0
			}
		}
		for w, mls := range g.byWeight {
			for k, ml := range mls {
				ml.weff, ml.weff32 = g0.byWeight[w][k].weff, g0.byWeight[w][k].weff32
			}
		}
	}
	type block struct {
		ml   *maskedLinear
		w, c int
		work int
	}
	var blocks []block
	total := 0
	for w, mls := range g0.byWeight {
		if len(mls) == 0 {
			continue
		}
		for c, t := range mls[0].t.cols {
			n := (t.a1 - t.a0) * (t.hi - t.lo)
			blocks = append(blocks, block{mls[0], w, c, n})
			total += n
		}
	}
	bg.jobs = make([][]prepJob, T)
	done, t := 0, 0
	for _, b := range blocks {
		for t < T-1 && done >= (t+1)*total/T {
			t++
		}
		js := bg.jobs[t]
		if k := len(js) - 1; k >= 0 && js[k].ml == b.ml && js[k].c1 == b.c {
			js[k].c1++
		} else {
			js = append(js, prepJob{b.ml, b.w, b.c, b.c + 1})
		}
		bg.jobs[t] = js
		done += b.work
	}
	bg.grads = append(bg.grads, nil)
	for range T - 1 {
		gr := make([][]float64, len(m.Weights))
		for i, w := range m.Weights {
			gr[i] = make([]float64, len(w.Data))
		}
		bg.grads = append(bg.grads, gr)
	}
	return bg, nil
}

// Batch returns the maximum number of snapshots per call.
func (bg *BatchGraph) Batch() int { return bg.batch }

// Threads returns the number of graphs (and goroutines) a batch is split
// over.
func (bg *BatchGraph) Threads() int {
	if bg.conv != nil {
		return len(bg.conv.works)
	}
	return len(bg.graphs)
}

// LossGrad computes the mean negative log-likelihood (nats per snapshot) of
// the n ≤ Batch() snapshots xs (n·N values) at their parameters params (n·d
// values), and writes scale times its gradient with respect to
// m.Weights[i].Data into grads[i] (same lengths). Graph t takes snapshots
// t·n/T … (t+1)·n/T−1; its loss and gradient enter with weight n_t/n.
func (bg *BatchGraph) LossGrad(xs []uint8, params []float64, n int, scale float64, grads [][]float64) (loss float64, err error) {
	defer recoverTo(&err)
	m := bg.m
	N, d := m.Cfg.Sites, m.Cfg.ParamDim
	if n < 1 || n > bg.batch {
		return 0, fmt.Errorf("model: batch must hold 1..%d snapshots, found %d", bg.batch, n)
	}
	if len(xs) != n*N || len(params) != n*d {
		return 0, fmt.Errorf("model: batch of %d needs %d site and %d parameter values, found %d and %d", n, n*N, n*d, len(xs), len(params))
	}
	if bg.conv != nil {
		return bg.convLossGrad(xs, params, n, scale, grads)
	}
	T := len(bg.graphs)
	if T == 1 {
		loss, err = bg.graphs[0].LossGrad(xs, params, n, grads)
		if err != nil {
			return 0, err
		}
		if scale != 1 {
			for _, g := range grads {
				for j := range g {
					g[j] *= scale
				}
			}
		}
		return loss, nil
	}
	if len(grads) != len(m.Weights) {
		return 0, fmt.Errorf("model: LossGrad needs %d gradient slices, found %d", len(m.Weights), len(grads))
	}
	for i, t := range m.Weights {
		if len(grads[i]) != len(t.Data) {
			return 0, fmt.Errorf("model: gradient slice %d (%q) must have length %d, found %d", i, t.Name, len(t.Data), len(grads[i]))
		}
	}
	// Each graph writes its gradient into its own slices; the weights of
	// a chunk are n_t/n.
	chunk := func(t int) (int, int) { return t * n / T, (t + 1) * n / T }
	gradsOf := func(t int) [][]float64 {
		if t == 0 {
			return grads
		}
		return bg.grads[t]
	}
	parallel := func(f func(t int)) {
		var wg sync.WaitGroup
		for t := 1; t < T; t++ {
			wg.Add(1)
			go func() { defer wg.Done(); f(t) }()
		}
		f(0)
		wg.Wait()
	}
	var panics [8]any
	guard := func(f func(t int)) func(t int) {
		return func(t int) {
			defer func() {
				if r := recover(); r != nil {
					panics[t%len(panics)] = r
				}
			}()
			f(t)
		}
	}
	parallel(guard(func(t int) {
		for _, j := range bg.jobs[t] {
			j.ml.prepareCols(m.Weights[j.w].Data, j.c0, j.c1)
		}
	}))
	parallel(guard(func(t int) {
		// Each graph waits for all preparations (parallel returns only
		// when every thread is done), then runs its chunk.
		bg.losses[t], bg.errs[t] = 0, nil
		lo, hi := chunk(t)
		if hi == lo {
			for _, g := range gradsOf(t) {
				clear(g)
			}
			return
		}
		bg.losses[t], bg.errs[t] = bg.graphs[t].LossGrad(xs[lo*N:hi*N], params[lo*d:hi*d], hi-lo, gradsOf(t))
	}))
	for _, p := range panics {
		if p != nil {
			return 0, fmt.Errorf("model: internal error: %v", p)
		}
	}
	for t := 0; t < T; t++ {
		if bg.errs[t] != nil {
			return 0, bg.errs[t]
		}
		lo, hi := chunk(t)
		loss += float64(hi-lo) / float64(n) * bg.losses[t]
	}
	// grads = scale·Σ_t (n_t/n)·grads_t, each thread over its share of
	// every weight's entries.
	f := make([]float64, T)
	for t := range f {
		lo, hi := chunk(t)
		f[t] = float64(hi-lo) / float64(n) * scale
	}
	parallel(func(t int) {
		for i, g := range grads {
			if mls := bg.deferred[i]; mls != nil {
				// Groups of combineRows rows taken in turn: the nonzero
				// blocks of a MADE weight crowd into its first rows, so
				// contiguous halves would leave one thread most of the
				// work.
				in := mls[0].t.in
				for r0 := t * combineRows; r0 < in; r0 += combineRows * T {
					combine32(g, mls, f, r0, min(r0+combineRows, in))
				}
				continue
			}
			lo, hi := t*len(g)/T, (t+1)*len(g)/T
			s := g[lo:hi]
			g0, f0 := s, f[0] // graph 0's gradient, combined in place
			if T == 2 {
				g1, f1 := bg.grads[1][i][lo:hi], f[1]
				for j := range s {
					s[j] = f0*g0[j] + f1*g1[j]
				}
				continue
			}
			for j := range s {
				s[j] = f0 * g0[j]
			}
			for c := 1; c < T; c++ {
				gc := bg.grads[c][i][lo:hi]
				fc := f[c]
				for j, v := range gc {
					s[j] += fc * v
				}
			}
		}
	})
	return loss, nil
}
