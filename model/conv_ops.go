package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	"tidemark/model/vmath"
)

// gemmTN adds aᵀ·b to c: a is [n, ac], b is [n, bc], c is [ac, bc].
func gemmTN(a []float64, n, ac int, b []float64, bc int, c []float64) {
	blas64.Gemm(blas.Trans, blas.NoTrans, 1,
		blas64.General{Rows: n, Cols: ac, Stride: ac, Data: a},
		blas64.General{Rows: n, Cols: bc, Stride: bc, Data: b},
		1, blas64.General{Rows: ac, Cols: bc, Stride: bc, Data: c})
}

// gemmNT writes a·bᵀ into c: a is [n, k], b is [m, k], c is [n, m].
func gemmNT(a []float64, n, k int, b []float64, mr int, c []float64) {
	blas64.Gemm(blas.NoTrans, blas.Trans, 1,
		blas64.General{Rows: n, Cols: k, Stride: k, Data: a},
		blas64.General{Rows: mr, Cols: k, Stride: k, Data: b},
		0, blas64.General{Rows: n, Cols: mr, Stride: mr, Data: c})
}

// convBackward adds the gradient of Σ_i lp_i·(−rowW_i) to grads, given
// dz = −rowW_i·∂lp/∂(logits after γ) from convLogProbs, after convForward
// on the same rows.
func (m *Model) convBackward(w *convWork, conds []*convCond, r int, dz []float64, grads [][]float64) {
	n, c, l := m.conv, m.Cfg, m.lay
	N := n.N
	L := len(c.Hidden)
	rN := r * N
	dshift := make([][][]float64, r)
	dgamma := make([][][]float64, r)
	for i := range r {
		dshift[i] = make([][]float64, L+1)
		dgamma[i] = make([][]float64, L+1)
	}
	dh := w.dh
	softp := c.Activation == "softplus"
	for k := L; k >= 0; k-- {
		wt := m.Weights[l.madeW[k]]
		rows, out := wt.Shape[0], wt.Shape[1]
		pre := w.pre[k][:rN*out]
		dp := w.dp[:rN*out]
		for i := 0; i < r; i++ {
			g := conds[i].gamma[k]
			ds, dg := make([]float64, out), make([]float64, out)
			off := i * N * out
			if k < L && softp {
				// dA = dh·σ(γ·pre), vectorised (model/vmath), into dp,
				// which the loop below reads before it overwrites.
				blk := dp[off : off+N*out]
				for j := 0; j < N*out; j += out {
					for o := range out {
						blk[j+o] = g[o] * pre[off+j+o]
					}
				}
				vmath.SigmoidMul(blk, dh[off:off+N*out], blk)
			}
			for j := 0; j < N*out; j += out {
				for o := range out {
					var dA float64
					switch {
					case k == L:
						dA = dz[off+j+o]
					case softp:
						dA = dp[off+j+o]
					default:
						dA = dh[off+j+o] * actDeriv(c.Activation, w.h[k][off+j+o], g[o]*pre[off+j+o])
					}
					dg[o] += dA * pre[off+j+o]
					d := dA * g[o]
					dp[off+j+o] = d
					ds[o] += d
				}
			}
			dshift[i][k], dgamma[i][k] = ds, dg
		}
		gw := grads[l.madeW[k]]
		switch {
		case k == L:
			gemmTN(w.h[L-1], rN, rows, dp, out, gw)
			if l.direct >= 0 {
				d := m.Weights[l.direct]
				convGather(w.g, w.x0, n.idxA, r, N, n.offsA, n.inC)
				gemmTN(w.g, rN, d.Shape[0], dp, out, grads[l.direct])
			}
			// dh = dp·Wᵀ (1×1 layer).
			gemmNT(dp, rN, out, wt.Data, rows, dh[:rN*rows])
		case k == 0:
			convGather(w.g, w.x0, n.idxA, r, N, n.offsA, n.inC)
			gemmTN(w.g, rN, rows, dp, out, gw)
		default:
			C := c.Hidden[k-1]
			convGather(w.g, w.h[k-1], n.idxB, r, N, n.offsB, C)
			gemmTN(w.g, rN, rows, dp, out, gw)
			gemmNT(dp, rN, out, wt.Data, rows, w.g[:rN*rows])
			d2 := w.dh2[:rN*C]
			clear(d2)
			convScatter(d2, w.g, n.idxB, r, N, n.offsB, C)
			copy(dh[:rN*C], d2)
		}
	}
	for i := 0; i < r; i++ {
		m.convCondBackward(conds[i], dshift[i], dgamma[i], grads)
	}
}

// convCondBackward adds the gradients of the conditioning of one row,
// given the loss's gradients by its shifts and scales.
func (m *Model) convCondBackward(cc *convCond, dshift, dgamma [][]float64, grads [][]float64) {
	c, l := m.Cfg, m.lay
	u := cc.phi
	if len(cc.hs) > 0 {
		u = cc.hs[len(cc.hs)-1]
	}
	du := make([]float64, len(u))
	outer := func(g []float64, a, b []float64, t Tensor) {
		out := len(b)
		for j, av := range a {
			row := g[j*out : (j+1)*out]
			for k, bv := range b {
				row[k] += av * bv
			}
		}
		for j := range du {
			row := t.Data[j*out : (j+1)*out]
			s := 0.0
			for k, bv := range b {
				s += row[k] * bv
			}
			du[j] += s
		}
	}
	for k := range l.madeW {
		gb := grads[l.madeB[k]]
		for o, v := range dshift[k] {
			gb[o] += v
		}
		outer(grads[l.condV[k]], u, dshift[k], m.Weights[l.condV[k]])
		if c.FiLM {
			outer(grads[l.condS[k]], u, dgamma[k], m.Weights[l.condS[k]])
		}
	}
	for i := len(l.condW) - 1; i >= 0; i-- {
		z, h := cc.zs[i], cc.hs[i]
		dz := make([]float64, len(z))
		for k := range z {
			dz[k] = du[k] * actDeriv(c.condAct(), h[k], z[k])
		}
		in := cc.phi
		if i > 0 {
			in = cc.hs[i-1]
		}
		wt := m.Weights[l.condW[i]]
		out := wt.Shape[1]
		gw, gb := grads[l.condW[i]], grads[l.condB[i]]
		for k, v := range dz {
			gb[k] += v
		}
		du = make([]float64, len(in))
		for j, a := range in {
			row := gw[j*out : (j+1)*out]
			wr := wt.Data[j*out : (j+1)*out]
			s := 0.0
			for k, v := range dz {
				row[k] += a * v
				s += wr[k] * v
			}
			du[j] = s
		}
	}
}

// convBatch is the training state of a BatchGraph of a convolutional
// model: per thread a workspace and private gradients.
type convBatch struct {
	works []*convWork
	grads [][][]float64
	loss  []float64
	errs  []error
}

func newConvBatch(m *Model, batch, threads int) *convBatch {
	T := min(threads, batch)
	cb := &convBatch{loss: make([]float64, T), errs: make([]error, T)}
	rb := min(m.convRowsPerBlock(), (batch+T-1)/T)
	for range T {
		cb.works = append(cb.works, m.newConvWork(rb))
		g := make([][]float64, len(m.Weights))
		for i, t := range m.Weights {
			g[i] = make([]float64, len(t.Data))
		}
		cb.grads = append(cb.grads, g)
	}
	return cb
}

// convLossGrad is LossGrad of a convolutional model: the batch is split
// into T contiguous chunks, one per goroutine, each with its own gradient
// arrays, summed in thread order, so the result depends only on the inputs
// and T.
func (bg *BatchGraph) convLossGrad(xs []uint8, params []float64, n int, scale float64, grads [][]float64) (float64, error) {
	m, cb := bg.m, bg.conv
	N, d := m.Cfg.Sites, m.Cfg.ParamDim
	if len(grads) != len(m.Weights) {
		return 0, fmt.Errorf("model: LossGrad needs %d gradient slices, found %d", len(m.Weights), len(grads))
	}
	for i, t := range m.Weights {
		if len(grads[i]) != len(t.Data) {
			return 0, fmt.Errorf("model: gradient slice %d (%q) must have length %d, found %d", i, t.Name, len(t.Data), len(grads[i]))
		}
	}
	if err := m.checkStates(xs, n); err != nil {
		return 0, err
	}
	for i := 0; i < n; i++ {
		if err := m.checkLambda(params[i*d : (i+1)*d]); err != nil {
			return 0, fmt.Errorf("snapshot %d: %w", i, err)
		}
	}
	T := min(len(cb.works), n)
	var wg sync.WaitGroup
	for t := 0; t < T; t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() {
				if r := recover(); r != nil {
					cb.errs[t] = fmt.Errorf("model: training step failed: %v", r)
				}
			}()
			cb.errs[t] = nil
			g := cb.grads[t]
			for _, v := range g {
				clear(v)
			}
			a, b := t*n/T, (t+1)*n/T
			cb.loss[t] = m.convChunk(cb.works[t], xs[a*N:b*N], params[a*d:b*d], b-a, 1/float64(n), g)
		}()
	}
	wg.Wait()
	loss := 0.0
	for t := 0; t < T; t++ {
		if cb.errs[t] != nil {
			return 0, cb.errs[t]
		}
		loss += cb.loss[t]
	}
	for i := range grads {
		dst := grads[i]
		copy(dst, cb.grads[0][i])
		for t := 1; t < T; t++ {
			for j, v := range cb.grads[t][i] {
				dst[j] += v
			}
		}
		if scale != 1 {
			for j := range dst {
				dst[j] *= scale
			}
		}
	}
	return loss, nil
}

// convChunk adds the gradient of wgt·Σ(−log p) of n snapshots to grads and
// returns wgt·Σ(−log p).
func (m *Model) convChunk(w *convWork, xs []uint8, params []float64, n int, wgt float64, grads [][]float64) float64 {
	N, d := m.Cfg.Sites, m.Cfg.ParamDim
	R := len(w.x0) / (N * m.conv.inC)
	dz := make([]float64, R*N*m.lay.per)
	total := 0.0
	for i0 := 0; i0 < n; i0 += R {
		r := min(R, n-i0)
		x := xs[i0*N : (i0+r)*N]
		conds := make([]*convCond, r)
		for i := range r {
			conds[i] = m.convCondOf(params[(i0+i)*d : (i0+i+1)*d])
		}
		lp := make([]float64, r)
		rowW := make([]float64, r)
		if !m.Cfg.Symmetric {
			for i := range rowW {
				rowW[i] = -wgt
			}
			m.convEncode(w, x, r, false)
			m.convForward(w, conds, r)
			m.convLogProbs(lp, x, w, conds, r, false, dz, rowW)
			m.convBackward(w, conds, r, dz, grads)
			for _, v := range lp {
				total -= wgt * v
			}
			continue
		}
		// log((p(x)+p(1−x))/2): each pass enters with its posterior weight.
		a, b := make([]float64, r), make([]float64, r)
		m.convEncode(w, x, r, true)
		m.convForward(w, conds, r)
		m.convLogProbs(b, x, w, conds, r, true, nil, nil)
		for pass, flip := range []bool{false, true} {
			m.convEncode(w, x, r, flip)
			m.convForward(w, conds, r)
			if pass == 0 {
				m.convLogProbs(a, x, w, conds, r, false, nil, nil)
			}
			for i := range r {
				p := 1 / (1 + math.Exp(b[i]-a[i]))
				if flip {
					p = 1 - p
				}
				rowW[i] = -wgt * p
			}
			m.convLogProbs(lp, x, w, conds, r, flip, dz, rowW)
			m.convBackward(w, conds, r, dz, grads)
		}
		for i := range r {
			total -= wgt * (logAddExp(a[i], b[i]) - math.Ln2)
		}
	}
	return total
}

// convLogProb is LogProb of a convolutional model.
func (m *Model) convLogProb(dst []float64, xs []uint8, lambda []float64) {
	N := m.Cfg.Sites
	R := min(m.convRowsPerBlock(), len(dst))
	w := m.newConvWork(R)
	cc := m.convCondOf(lambda)
	conds := make([]*convCond, R)
	for i := range conds {
		conds[i] = cc
	}
	for i := 0; i < len(dst); i += R {
		r := min(R, len(dst)-i)
		m.convScore(dst[i:i+r], xs[i*N:(i+r)*N], w, conds, r)
	}
}

// convLogProbMatrix is LogProbMatrix of a convolutional model: units of
// (block of snapshots, λ) spread over threads; each unit's result does not
// depend on the thread that computes it.
func (m *Model) convLogProbMatrix(out []float64, xs []uint8, n int, lambdas [][]float64, threads int) error {
	N, K := m.Cfg.Sites, len(lambdas)
	if threads <= 0 {
		threads = runtime.NumCPU()
	}
	R := min(m.convRowsPerBlock(), n)
	ccs := make([]*convCond, K)
	for k, l := range lambdas {
		ccs[k] = m.convCondOf(l)
	}
	blocks := (n + R - 1) / R
	units := blocks * K
	return forEachUnit(threads, units, "LogProbMatrix", func() (func(u int), func()) {
		w := m.newConvWork(R)
		conds := make([]*convCond, R)
		col := make([]float64, R)
		return func(u int) {
			b, k := u/K, u%K
			i := b * R
			r := min(R, n-i)
			for j := range conds {
				conds[j] = ccs[k]
			}
			m.convScore(col[:r], xs[i*N:(i+r)*N], w, conds, r)
			for j := 0; j < r; j++ {
				out[(i+j)*K+k] = col[j]
			}
		}, func() {}
	})
}

// convSample draws n snapshots ancestrally: at site s it computes every
// layer at s only (they read the sites before s, already drawn, and the
// layers below at s), so a draw costs about one forward pass.
func (m *Model) convSample(dst []uint8, n int, lambda []float64, rng *rand.Rand) {
	nt, c, l := m.conv, m.Cfg, m.lay
	N, q, per := nt.N, c.Alphabet, l.per
	L := len(c.Hidden)
	act := actFunc(c.Activation)
	cc := m.convCondOf(lambda)
	R := min(n, 64)
	x0 := make([]float64, R*N*nt.inC)
	hs := make([][]float64, L)
	for k := range hs {
		hs[k] = make([]float64, R*N*c.Hidden[k])
	}
	probs := make([]float64, q)
	// unit computes out values at site s of row i from src (C channels per
	// site) through weight wt with the offsets idx (P per site).
	unit := func(dstv []float64, src []float64, C int, idx []int32, P int, wt []float64, out, i, s int) {
		for p, t := range idx[s*P : (s+1)*P] {
			if t < 0 {
				continue
			}
			in := src[(i*N+int(t))*C : (i*N+int(t)+1)*C]
			for ch, v := range in {
				if v == 0 {
					continue
				}
				row := wt[(p*C+ch)*out : (p*C+ch+1)*out]
				for o := range out {
					dstv[o] += v * row[o]
				}
			}
		}
	}
	z := make([]float64, per)
	maxH := 0
	for _, h := range c.Hidden {
		maxH = max(maxH, h)
	}
	pre := make([]float64, maxH)
	for i0 := 0; i0 < n; i0 += R {
		r := min(R, n-i0)
		x := dst[i0*N : (i0+r)*N]
		clear(x)
		clear(x0)
		for s := 0; s < N; s++ {
			for i := 0; i < r; i++ {
				for k := 0; k < L; k++ {
					out := c.Hidden[k]
					p := pre[:out]
					copy(p, cc.shift[k])
					wt := m.Weights[l.madeW[k]].Data
					if k == 0 {
						unit(p, x0, nt.inC, nt.idxA, nt.offsA, wt, out, i, s)
					} else {
						unit(p, hs[k-1], c.Hidden[k-1], nt.idxB, nt.offsB, wt, out, i, s)
					}
					h := hs[k][(i*N+s)*out : (i*N+s+1)*out]
					for o := range out {
						h[o] = act(cc.gamma[k][o] * p[o])
					}
				}
				copy(z, cc.shift[L])
				hL := hs[L-1][(i*N+s)*c.Hidden[L-1] : (i*N+s+1)*c.Hidden[L-1]]
				wt := m.Weights[l.madeW[L]].Data
				for ch, v := range hL {
					for o := range per {
						z[o] += v * wt[ch*per+o]
					}
				}
				if l.direct >= 0 {
					unit(z, x0, nt.inC, nt.idxA, nt.offsA, m.Weights[l.direct].Data, per, i, s)
				}
				for o := range per {
					z[o] *= cc.gamma[L][o]
				}
				u := rng.Float64()
				v := 0
				if q == 2 {
					if u < 1/(1+math.Exp(-z[0])) {
						v = 1
					}
					x0[i*N+s] = 2*float64(v) - 1
				} else {
					v = drawCategorical(z, probs, u)
					x0[(i*N+s)*q+v] = 1
				}
				x[i*N+s] = uint8(v)
			}
		}
		if c.Symmetric {
			for i := 0; i < r; i++ {
				if rng.IntN(2) == 1 {
					row := x[i*N : (i+1)*N]
					for k := range row {
						row[k] = 1 - row[k]
					}
				}
			}
		}
	}
}
