package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/blas/gonum"
)

// blockRows is the number of snapshots the scoring kernel handles at once.
// It is fixed, so results never depend on the number of threads.
const blockRows = 64

// prep holds the masked weights of one scoring call.
type prep struct {
	eff    [][]float64 // W⊙M per masked layer
	effD   []float64   // direct weights ⊙ mask, or nil
	eff32  [][]float32 // float32 copies of eff with Precision float32
	effD32 []float32   // float32 copy of effD with Precision float32
}

// prepare multiplies the current weights by their masks. The kernel applies
// the masks itself, so the autoregressive property never depends on how a
// trainer treated the entries outside the masks.
func (m *Model) prepare() *prep { return m.prepareFor(true) }

// prepareFor is prepare. With Precision float32 and q = 2, scoring reads
// only the float32 copies, inside the nonzero blocks of each mask, so
// unless need64 is set only those are computed (the float64 eff is then
// stale and must not be read).
func (m *Model) prepareFor(need64 bool) *prep {
	p, _ := m.pool.Get().(*prep)
	l := m.lay
	if p == nil {
		p = &prep{eff: make([][]float64, len(l.madeW))}
		for i, w := range l.madeW {
			p.eff[i] = make([]float64, len(m.Weights[w].Data))
		}
		if l.direct >= 0 {
			p.effD = make([]float64, len(m.Weights[l.direct].Data))
		}
	}
	f32 := m.Cfg.Precision == PrecisionFloat32
	if f32 && !need64 && m.Cfg.Alphabet == 2 {
		if p.eff32 == nil {
			p.eff32 = make([][]float32, len(p.eff))
		}
		for i, w := range l.madeW {
			p.eff32[i] = blocks32(p.eff32[i], m.Weights[w].Data, m.tiles[i])
		}
		if l.direct >= 0 {
			p.effD32 = blocks32(p.effD32, m.Weights[l.direct].Data, m.tiles[len(m.tiles)-1])
		}
		return p
	}
	for i, w := range l.madeW {
		mul(p.eff[i], m.Weights[w].Data, m.masks[i].Data)
	}
	if l.direct >= 0 {
		mul(p.effD, m.Weights[l.direct].Data, m.masks[len(m.masks)-1].Data)
	}
	if f32 {
		if p.eff32 == nil {
			p.eff32 = make([][]float32, len(p.eff))
		}
		for i := range p.eff {
			p.eff32[i] = to32(p.eff32[i], p.eff[i])
		}
		if p.effD != nil {
			p.effD32 = to32(p.effD32, p.effD)
		}
	}
	return p
}

// prepareScore is prepare for the scoring paths (LogProb, LogProbMatrix),
// which need no float64 weights in single precision.
func (m *Model) prepareScore() *prep { return m.prepareFor(false) }

// blocks32 writes float32(W⊙M) into dst (grown to the size of w) inside
// the column blocks of t, the only entries a forward product reads.
func blocks32(dst []float32, w []float64, t tiling) []float32 {
	dst = grow32(dst, len(w))
	masked32(dst, w, t, t.cols)
	return dst
}

// masked32 writes float32(W⊙M) into dst inside the column blocks cols of
// t (rows whose mask is all ones are only rounded), band of rows by band
// of rows (see rowBands).
func masked32(dst []float32, w []float64, t tiling, cols []tile) {
	rowBands(cols, func(c tile) {
		vMasked32(dst, w, t.mask, c, t.out)
	})
}

func mul(dst, a, b []float64) {
	for i := range dst {
		dst[i] = a[i] * b[i]
	}
}

// condBias returns, for each masked layer, its bias plus the conditioning
// net's contribution at lambda; with FiLM the layer's scale γ follows in the
// same slice (width bias values, then width scales).
func (m *Model) condBias(lambda []float64) [][]float64 {
	c := m.Cfg
	l := m.lay
	u := make([]float64, c.featDim())
	c.features(u, lambda)
	act := actFunc(c.condAct())
	for i, w := range l.condW {
		W := m.Weights[w]
		out := append([]float64(nil), m.Weights[l.condB[i]].Data...)
		blas64.Gemv(blas.Trans, 1, gen(W), vec(u), 1, vec(out))
		for k := range out {
			out[k] = act(out[k])
		}
		u = out
	}
	cb := make([][]float64, len(l.madeW))
	for i := range l.madeW {
		b := append([]float64(nil), m.Weights[l.madeB[i]].Data...)
		blas64.Gemv(blas.Trans, 1, gen(m.Weights[l.condV[i]]), vec(u), 1, vec(b))
		if c.FiLM {
			// The scale γ = 1 + u·S follows the bias in the same slice.
			w := len(b)
			b = append(b, make([]float64, w)...)
			g := b[w:]
			for k := range g {
				g[k] = 1
			}
			blas64.Gemv(blas.Trans, 1, gen(m.Weights[l.condS[i]]), vec(u), 1, vec(g))
		}
		cb[i] = b
	}
	return cb
}

func gen(t Tensor) blas64.General {
	return blas64.General{Rows: t.Shape[0], Cols: t.Shape[1], Stride: t.Shape[1], Data: t.Data}
}

func vec(x []float64) blas64.Vector { return blas64.Vector{N: len(x), Inc: 1, Data: x} }

func actFunc(a Activation) func(float64) float64 {
	switch a {
	case Tanh:
		return math.Tanh
	case Softplus:
		return softplus
	}
	return func(x float64) float64 { return math.Max(x, 0) }
}

// softplus is log(1+e^z), computed without overflow. With e = e^−|z| ≤ 1,
// log(1+e) is taken as math.Log(1+e) rather than math.Log1p(e): its
// absolute error stays below 2.3e-16 (the rounding of 1+e), which is what
// matters in a sum of per-site terms, and it is about twice as fast.
func softplus(z float64) float64 {
	if z > 0 {
		return z + math.Log(1+math.Exp(-z))
	}
	return math.Log(1 + math.Exp(z))
}

// workspace is the scratch of one goroutine for blocks of up to rows snapshots.
type workspace struct {
	rows     int
	a0, dx   []float64 // λ-independent first-layer and direct products
	a0f, dxf []float64 // the same for flipped snapshots (Symmetric)
	h        [][]float64
	z        []float64
	lins     []*maskedLinear // block-skipping products of the masked layers
	linD     *maskedLinear   // and of the direct connection
	xin      []float64       // 0/1 inputs of a block (q = 2)
	e        []float64       // scratch of one row's per-site terms (q = 2)
	pre      []float64       // FiLM's scaled pre-activations (float32 path)
	zero     []float64       // a zero bias for the activation kernels (FiLM)
}

// lin returns the masked product of layer l reading the weights of p.
func (w *workspace) lin(p *prep, l int) *maskedLinear {
	ml := w.lins[l]
	ml.weff = p.eff[l]
	ml.f32 = p.eff32 != nil
	if ml.f32 {
		ml.weff32 = p.eff32[l]
	}
	return ml
}

func (m *Model) newWorkspace(rows int) *workspace {
	c := m.Cfg
	w := &workspace{rows: rows}
	w.a0 = make([]float64, rows*c.Hidden[0])
	w.dx = make([]float64, rows*m.lay.dout)
	if c.Symmetric {
		w.a0f = make([]float64, rows*c.Hidden[0])
		w.dxf = make([]float64, rows*m.lay.dout)
	}
	for _, h := range c.Hidden {
		w.h = append(w.h, make([]float64, rows*h))
	}
	w.z = make([]float64, rows*m.lay.dout)
	f32 := c.Precision == PrecisionFloat32
	for i := range m.lay.madeW {
		w.lins = append(w.lins, &maskedLinear{name: m.masks[i].Name, t: m.tiles[i], f32: f32})
	}
	if m.lay.direct >= 0 {
		w.linD = &maskedLinear{name: "mask.direct", t: m.tiles[len(m.tiles)-1], f32: f32}
	}
	if c.Alphabet == 2 {
		w.xin = make([]float64, rows*c.Sites)
		w.e = make([]float64, 2*c.Sites)
	}
	return w
}

// getWorkspace returns a pooled workspace for blockRows snapshots.
func (m *Model) getWorkspace() *workspace {
	if w, ok := m.wsPool.Get().(*workspace); ok {
		return w
	}
	return m.newWorkspace(blockRows)
}

// gather computes the first-layer product x·(W0⊙M0) and the direct product
// x·(D⊙MD) of r snapshots, flipping every spin when flip is set (q = 2
// only): for q = 2 by block matrix products, otherwise by adding the weight
// rows of the one-hot inputs.
func (m *Model) gather(p *prep, w *workspace, xs []uint8, r int, flip bool, a0, dx []float64) {
	c := m.Cfg
	n, h0, dout := c.Sites, c.Hidden[0], m.lay.dout
	if c.Alphabet == 2 {
		// For q = 2 the inputs are dense 0/1, so the products are block
		// matrix products: each weight row is then read once per block
		// instead of once per snapshot, which keeps the large first-layer
		// and direct matrices in cache.
		l0 := w.lin(p, 0)
		var ld *maskedLinear
		if p.effD != nil {
			ld = w.linD
			ld.weff, ld.weff32, ld.f32 = p.effD, p.effD32, p.effD32 != nil
		}
		if l0.f32 && (ld == nil || ld.f32) {
			// Single precision: the float32 inputs of both products are
			// written straight from the states, once, and copied.
			l0.fx32 = grow32(l0.fx32, r*n)
			vStates32(l0.fx32, xs[:r*n], flip)
			l0.fxOK = true
			if ld != nil {
				ld.fx32 = grow32(ld.fx32, r*n)
				copy(ld.fx32, l0.fx32)
				ld.fxOK = true
			}
			l0.forward(a0, nil, r, false)
			if ld != nil {
				ld.forward(dx, nil, r, false)
			}
			return
		}
		xin := w.xin[:r*n]
		for k, v := range xs[:r*n] {
			xin[k] = 0
			if (v == 1) != flip {
				xin[k] = 1
			}
		}
		l0.forward(a0, xin, r, false)
		if ld != nil {
			ld.forward(dx, xin, r, false)
		}
		return
	}
	clear(a0[:r*h0])
	if p.effD != nil {
		clear(dx[:r*dout])
	}
	for i := 0; i < r; i++ {
		x := xs[i*n : (i+1)*n]
		ar := a0[i*h0 : (i+1)*h0]
		var dr []float64
		if p.effD != nil {
			dr = dx[i*dout : (i+1)*dout]
		}
		for s, v := range x {
			var j int
			if c.Alphabet == 2 {
				if (v == 1) == flip {
					continue
				}
				j = s
			} else {
				j = s*c.Alphabet + int(v)
			}
			addTo(ar, p.eff[0][j*h0:(j+1)*h0])
			if dr != nil {
				addTo(dr, p.effD[j*dout:(j+1)*dout])
			}
		}
	}
}

// native is gonum's pure-Go BLAS, used for the many short vector additions
// of the first layer: through cgo (build tag openblas) each call would cost
// more than the addition itself.
var native gonum.Implementation

// addTo adds src[:len(dst)] to dst.
func addTo(dst, src []float64) {
	if len(dst) >= 16 {
		native.Daxpy(len(dst), 1, src, 1, dst, 1)
		return
	}
	src = src[:len(dst)]
	for k := range dst {
		dst[k] += src[k]
	}
}

// hidden runs the hidden layers of r snapshots from their first-layer
// product a0, leaving the last hidden activations in w.h[L-1] — or, with
// Precision float32, rounded to float32 as the input of the output layer's
// product (each activation is computed in float64 and rounded once, in the
// pass that applies the bias and the activation).
func (m *Model) hidden(p *prep, cb [][][]float64, w *workspace, a0 []float64, r int) {
	c := m.Cfg
	act := actFunc(c.Activation)
	f32 := p.eff32 != nil
	// The activation passes of ReLU and softplus are vector kernels
	// (vBiasAct32, vAct64); tanh runs as a Go loop.
	vact := 0
	switch c.Activation {
	case ReLU:
		vact = actRelu
	case Softplus:
		vact = actSoftplus
	}
	for l, hw := range c.Hidden {
		var h []float64
		var y32, next []float32
		if f32 {
			if l > 0 {
				w.lin(p, l).product32(r)
				y32 = w.lins[l].y32[:r*hw]
			}
			nl := w.lins[l+1]
			nl.fx32 = grow32(nl.fx32, r*hw)
			next = nl.fx32
		} else {
			h = w.h[l][:r*hw]
			if l == 0 {
				copy(h, a0[:r*hw])
			} else {
				w.lin(p, l).forward(h, w.h[l-1], r, false)
			}
		}
		if c.FiLM {
			m.filmAct(cb, w, a0, h, y32, next, l, hw, r, vact)
			continue
		}
		if f32 && vact != 0 {
			// The rows in one call when they share a bias.
			var s64 []float64
			if l == 0 {
				s64 = a0[:r*hw]
			}
			if len(cb) == 1 {
				vBiasAct32(next, s64, y32, cb[0][l], r, hw, vact)
				continue
			}
			for i := 0; i < r; i++ {
				lo, hi := i*hw, (i+1)*hw
				if l == 0 {
					vBiasAct32(next[lo:hi], s64[lo:hi], nil, cb[min(i, len(cb)-1)][l], 1, hw, vact)
				} else {
					vBiasAct32(next[lo:hi], nil, y32[lo:hi], cb[min(i, len(cb)-1)][l], 1, hw, vact)
				}
			}
			continue
		}
		if !f32 && vact != 0 {
			if len(cb) == 1 {
				vAct64(h, cb[0][l], r, hw, vact)
				continue
			}
			for i := 0; i < r; i++ {
				vAct64(h[i*hw:(i+1)*hw], cb[min(i, len(cb)-1)][l], 1, hw, vact)
			}
			continue
		}
		for i := 0; i < r; i++ {
			b := cb[min(i, len(cb)-1)][l]
			lo, hi := i*hw, (i+1)*hw
			switch {
			case !f32:
				row := h[lo:hi]
				for k := range row {
					row[k] = act(row[k] + b[k])
				}
			case l == 0:
				src, dst := a0[lo:hi], next[lo:hi]
				for k := range dst {
					dst[k] = float32(act(src[k] + b[k]))
				}
			default:
				src, dst := y32[lo:hi], next[lo:hi]
				for k := range dst {
					dst[k] = float32(act(float64(src[k]) + b[k]))
				}
			}
		}
	}
}

// filmAct applies hidden layer l's activation to the FiLM pre-activations
// (y + b)⊙γ of r snapshots, γ following the bias in cb. The products y are
// in h (float64), in a0 (the first layer, float32 path) or in y32; the
// pre-activations are written in float64 first (in place in h), then the
// activation writes h or, on the float32 path, next — by the vector kernel
// with a zero bias for ReLU and softplus (vact ≠ 0).
func (m *Model) filmAct(cb [][][]float64, w *workspace, a0, h []float64, y32, next []float32, l, hw, r, vact int) {
	f32 := next != nil
	pre := h
	if f32 {
		w.pre = grow64(w.pre, r*hw)
		pre = w.pre[:r*hw]
	}
	for i := 0; i < r; i++ {
		b := cb[min(i, len(cb)-1)][l]
		g := b[hw:]
		lo, hi := i*hw, (i+1)*hw
		row := pre[lo:hi]
		switch {
		case !f32:
			for k := range row {
				row[k] = (row[k] + b[k]) * g[k]
			}
		case l == 0:
			src := a0[lo:hi]
			for k := range row {
				row[k] = (src[k] + b[k]) * g[k]
			}
		default:
			src := y32[lo:hi]
			for k := range row {
				row[k] = (float64(src[k]) + b[k]) * g[k]
			}
		}
	}
	if vact == 0 {
		act := actFunc(m.Cfg.Activation)
		for k, v := range pre {
			if f32 {
				next[k] = float32(act(v))
			} else {
				pre[k] = act(v)
			}
		}
		return
	}
	if len(w.zero) < hw {
		w.zero = make([]float64, hw)
	}
	if f32 {
		vBiasAct32(next, pre, nil, w.zero[:hw], r, hw, vact)
	} else {
		vAct64(h, w.zero[:hw], r, hw, vact)
	}
}

// logits computes all output logits of r snapshots into w.z: the direct
// product, plus the output layer's product, plus the bias.
func (m *Model) logits(p *prep, cb [][][]float64, w *workspace, dx []float64, r int) {
	c := m.Cfg
	L := len(c.Hidden)
	dout := m.lay.dout
	z := w.z[:r*dout]
	if p.eff32 != nil {
		w.lin(p, L).product32(r)
		y32 := w.lins[L].y32[:r*dout]
		var dxr []float64
		if p.effD != nil {
			dxr = dx[:r*dout]
		}
		if len(cb) == 1 {
			b := cb[0][L]
			vLogits32(z, dxr, y32, b[:dout], r, dout)
			if c.FiLM {
				for i := 0; i < r; i++ {
					mul(z[i*dout:(i+1)*dout], z[i*dout:(i+1)*dout], b[dout:])
				}
			}
			return
		}
		for i := 0; i < r; i++ {
			b := cb[min(i, len(cb)-1)][L]
			lo, hi := i*dout, (i+1)*dout
			zr, yr := z[lo:hi], y32[lo:hi]
			if p.effD != nil {
				dr := dx[lo:hi]
				for k := range zr {
					zr[k] = (dr[k] + float64(yr[k])) + b[k]
				}
			} else {
				for k := range zr {
					zr[k] = float64(yr[k]) + b[k]
				}
			}
			if c.FiLM {
				mul(zr, zr, b[dout:])
			}
		}
		return
	}
	if p.effD != nil {
		copy(z, dx[:r*dout])
	} else {
		clear(z)
	}
	w.lin(p, L).forward(z, w.h[L-1], r, true)
	for i := 0; i < r; i++ {
		b := cb[min(i, len(cb)-1)][L]
		zr := z[i*dout : (i+1)*dout]
		addTo(zr, b[:dout])
		if c.FiLM {
			mul(zr, zr, b[dout:])
		}
	}
}

// prodTerms is how many factors 1+e^−|z| (each in (1, 2]) are multiplied
// before one logarithm is taken: their product stays below 2^512, far from
// overflow.
const prodTerms = 512

// rowLogProbs writes log p(x_i) of r snapshots from the logits in w.z,
// summing the per-site terms in float64. For q = 2 the per-site term is
// x·z − softplus(z) with softplus(z) = max(z, 0) + log(1+e^−|z|); the
// logarithms of up to prodTerms sites are taken as one logarithm of their
// product, whose rounding error (about 1.1e-16 per factor, relative) is of
// the same size as that of the sum of separate logarithms it replaces.
func (m *Model) rowLogProbs(dst []float64, xs []uint8, w *workspace, r int, flip bool) {
	c := m.Cfg
	n, q, dout := c.Sites, c.Alphabet, m.lay.dout
	if q == 2 {
		vRowLP2(dst[:r], w.z[:r*dout], dout, xs[:r*n], n, r, flip, w.e)
		return
	}
	for i := 0; i < r; i++ {
		x := xs[i*n : (i+1)*n]
		z := w.z[i*dout : (i+1)*dout]
		s := 0.0
		for j, v := range x {
			zs := z[j*q : (j+1)*q]
			mx := zs[0]
			for _, t := range zs[1:] {
				mx = math.Max(mx, t)
			}
			e := 0.0
			for _, t := range zs {
				e += math.Exp(t - mx)
			}
			s += zs[v] - mx - math.Log(e)
		}
		dst[i] = s
	}
}

// scoreBlock writes log p(x_i|λ) of r snapshots whose λ-independent products
// are already in w.
func (m *Model) scoreBlock(dst []float64, xs []uint8, p *prep, cb [][][]float64, w *workspace, r int) {
	m.hidden(p, cb, w, w.a0, r)
	m.logits(p, cb, w, w.dx, r)
	m.rowLogProbs(dst, xs, w, r, false)
	if !m.Cfg.Symmetric {
		return
	}
	var buf [blockRows]float64
	f := buf[:r]
	m.hidden(p, cb, w, w.a0f, r)
	m.logits(p, cb, w, w.dxf, r)
	m.rowLogProbs(f, xs, w, r, true)
	for i := range f {
		a, b := dst[i], f[i]
		hi, lo := math.Max(a, b), math.Min(a, b)
		dst[i] = hi + math.Log1p(math.Exp(lo-hi)) - math.Ln2
	}
}

func (m *Model) gatherAll(p *prep, xs []uint8, r int, w *workspace) {
	m.gather(p, w, xs, r, false, w.a0, w.dx)
	if m.Cfg.Symmetric {
		m.gather(p, w, xs, r, true, w.a0f, w.dxf)
	}
}

func (m *Model) checkStates(xs []uint8, n int) error {
	q := m.Cfg.Alphabet
	for k, v := range xs[:n*m.Cfg.Sites] {
		if int(v) >= q {
			return fmt.Errorf("model: site values must be below the alphabet size %d, found %d at snapshot %d site %d", q, v, k/m.Cfg.Sites, k%m.Cfg.Sites)
		}
	}
	return nil
}

func (m *Model) checkLambda(lambda []float64) error {
	if len(lambda) != m.Cfg.ParamDim {
		return fmt.Errorf("model: λ must have %d components, found %d", m.Cfg.ParamDim, len(lambda))
	}
	for i, v := range lambda {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("model: λ must be finite, found %v in component %d", v, i)
		}
	}
	return nil
}

// LogProb writes log p(x_m|λ) in nats for each snapshot row of xs
// (len(xs) = len(dst)·N) into dst. It is safe for concurrent use.
func (m *Model) LogProb(dst []float64, xs []uint8, lambda []float64) (err error) {
	defer recoverTo(&err)
	n := len(dst)
	if len(xs) != n*m.Cfg.Sites {
		return fmt.Errorf("model: LogProb needs %d·%d = %d site values for %d snapshots, found %d", n, m.Cfg.Sites, n*m.Cfg.Sites, n, len(xs))
	}
	if err := m.checkLambda(lambda); err != nil {
		return err
	}
	if err := m.checkStates(xs, n); err != nil {
		return err
	}
	if n == 0 {
		return nil
	}
	if m.conv != nil {
		m.convLogProb(dst, xs, lambda)
		return nil
	}
	p := m.prepareScore()
	defer m.pool.Put(p)
	cb := [][][]float64{m.condBias(lambda)}
	w := m.getWorkspace()
	defer m.wsPool.Put(w)
	N := m.Cfg.Sites
	for i := 0; i < n; i += blockRows {
		r := min(blockRows, n-i)
		x := xs[i*N : (i+r)*N]
		m.gatherAll(p, x, r, w)
		m.scoreBlock(dst[i:i+r], x, p, cb, w, r)
	}
	return nil
}

// LogProbMatrix returns out[i*K+k] = log p(x_i|λ_k) in nats for n snapshots
// xs (n·N values) and K lambdas (each of length d). The λ-independent masked
// first-layer product of each snapshot is computed once and reused for
// every λ. Work is spread over threads goroutines (threads ≤ 0 means
// runtime.NumCPU()) by blocks of snapshots; the result does not depend on
// threads.
func (m *Model) LogProbMatrix(xs []uint8, n int, lambdas [][]float64, threads int) (out []float64, err error) {
	defer recoverTo(&err)
	N := m.Cfg.Sites
	if n < 0 || len(xs) != n*N {
		return nil, fmt.Errorf("model: LogProbMatrix needs %d·%d site values for %d snapshots, found %d", n, N, n, len(xs))
	}
	for k, l := range lambdas {
		if err := m.checkLambda(l); err != nil {
			return nil, fmt.Errorf("λ #%d: %w", k, err)
		}
	}
	if err := m.checkStates(xs, n); err != nil {
		return nil, err
	}
	K := len(lambdas)
	out = make([]float64, n*K)
	if n == 0 || K == 0 {
		return out, nil
	}
	if m.conv != nil {
		if err := m.convLogProbMatrix(out, xs, n, lambdas, threads); err != nil {
			return nil, err
		}
		return out, nil
	}
	if threads <= 0 {
		threads = runtime.NumCPU()
	}
	p := m.prepareScore()
	defer m.pool.Put(p)
	cbs := make([][][][]float64, K)
	for k, l := range lambdas {
		cbs[k] = [][][]float64{m.condBias(l)}
	}
	// Work units are (block of snapshots, group of λ). With fewer blocks
	// than threads the λ are split into groups so that every thread has
	// work; each unit recomputes its block's first-layer product, which is
	// cheap next to the λ-dependent layers. The grouping never changes a
	// result, so out does not depend on threads.
	blocks := (n + blockRows - 1) / blockRows
	groups := min(K, max(1, (2*threads+blocks-1)/blocks))
	per := (K + groups - 1) / groups
	groups = (K + per - 1) / per
	units := blocks * groups
	err = forEachUnit(threads, units, "LogProbMatrix", func() (func(u int), func()) {
		w := m.getWorkspace()
		col := make([]float64, blockRows)
		return func(u int) {
			b, grp := u/groups, u%groups
			i := b * blockRows
			r := min(blockRows, n-i)
			x := xs[i*N : (i+r)*N]
			m.gatherAll(p, x, r, w)
			for k := grp * per; k < min(K, (grp+1)*per); k++ {
				m.scoreBlock(col[:r], x, p, cbs[k], w, r)
				for j := 0; j < r; j++ {
					out[(i+j)*K+k] = col[j]
				}
			}
		}, func() { m.wsPool.Put(w) }
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}

// sampleRows is the number of snapshots Sample draws together.
const sampleRows = 256

// Sample writes n snapshots (n·N values) drawn exactly from p(·|λ) into dst
// by ancestral sampling along the site ordering. The draws depend only on
// the state of rng (and on n); with Symmetric each snapshot is flipped with
// probability 1/2.
func (m *Model) Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) (err error) {
	defer recoverTo(&err)
	c := m.Cfg
	N, q, per := c.Sites, c.Alphabet, m.lay.per
	if n < 0 || len(dst) != n*N {
		return fmt.Errorf("model: Sample needs room for %d·%d site values, found %d", n, N, len(dst))
	}
	if rng == nil {
		return fmt.Errorf("model: Sample needs a random source, found nil")
	}
	if err := m.checkLambda(lambda); err != nil {
		return err
	}
	if n == 0 {
		return nil
	}
	if m.conv != nil {
		m.convSample(dst, n, lambda, rng)
		return nil
	}
	p := m.prepare()
	defer m.pool.Put(p)
	cb := [][][]float64{m.condBias(lambda)}
	rows := min(n, sampleRows)
	w := m.newWorkspace(rows)
	L := len(c.Hidden)
	hl, h0, dout := c.Hidden[L-1], c.Hidden[0], m.lay.dout
	zs := make([]float64, rows*per)
	probs := make([]float64, q)
	cnt := make([]int, L)
	for i0 := 0; i0 < n; i0 += rows {
		r := min(rows, n-i0)
		x := dst[i0*N : (i0+r)*N]
		clear(x)
		clear(cnt)
		clear(w.a0[:r*h0])
		clear(w.dx[:r*dout])
		for pos, s := range c.Order {
			// Only hidden units of degree ≤ pos reach the output at pos, and
			// they depend only on positions < pos, which are already drawn:
			// so each unit is computed once, at the step its degree comes
			// up, and kept (the whole draw costs about one forward pass).
			for l := range cnt {
				from := cnt[l]
				cnt[l] = sort.SearchInts(m.hdeg[l], pos+1)
				m.sampleUnits(p, cb[0], w, r, l, from, cnt[l], cnt)
			}
			kl := cnt[L-1]
			// Logits of site s only: the columns s·per … s·per+per−1.
			z := zs[:r*per]
			for i := 0; i < r; i++ {
				for v := 0; v < per; v++ {
					o := s*per + v
					z[i*per+v] = cb[0][L][o]
					if p.effD != nil {
						z[i*per+v] += w.dx[i*dout+o]
					}
				}
			}
			if kl > 0 {
				blas64.Gemm(blas.NoTrans, blas.NoTrans, 1,
					blas64.General{Rows: r, Cols: kl, Stride: hl, Data: w.h[L-1]},
					blas64.General{Rows: kl, Cols: per, Stride: dout, Data: p.eff[L][s*per:]},
					1, blas64.General{Rows: r, Cols: per, Stride: per, Data: z})
			}
			if c.FiLM {
				g := cb[0][L][dout+s*per : dout+(s+1)*per]
				for i := 0; i < r; i++ {
					mul(z[i*per:(i+1)*per], z[i*per:(i+1)*per], g)
				}
			}
			for i := 0; i < r; i++ {
				var v int
				u := rng.Float64()
				if q == 2 {
					if u < 1/(1+math.Exp(-z[i])) {
						v = 1
					}
				} else {
					v = drawCategorical(z[i*q:(i+1)*q], probs, u)
				}
				x[i*N+s] = uint8(v)
				if q == 2 && v == 0 {
					continue
				}
				j := s
				if q > 2 {
					j = s*q + v
				}
				addTo(w.a0[i*h0:(i+1)*h0], p.eff[0][j*h0:(j+1)*h0])
				if p.effD != nil {
					addTo(w.dx[i*dout:(i+1)*dout], p.effD[j*dout:(j+1)*dout])
				}
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
	return nil
}

// recoverTo turns a panic into an error so none escapes a public function.
func recoverTo(err *error) {
	if r := recover(); r != nil {
		*err = fmt.Errorf("model: internal error: %v", r)
	}
}

// logProbRows writes log p(x_i|λ_i) for n snapshots, each with its own λ
// (params holds n·d values). Inputs are assumed valid.
func (m *Model) logProbRows(dst []float64, xs []uint8, params []float64, n int) {
	p := m.prepareScore()
	defer m.pool.Put(p)
	N, d := m.Cfg.Sites, m.Cfg.ParamDim
	w := m.getWorkspace()
	defer m.wsPool.Put(w)
	cb := make([][][]float64, blockRows)
	for i := 0; i < n; i += blockRows {
		r := min(blockRows, n-i)
		for j := 0; j < r; j++ {
			cb[j] = m.condBias(params[(i+j)*d : (i+j+1)*d])
		}
		x := xs[i*N : (i+r)*N]
		m.gatherAll(p, x, r, w)
		m.scoreBlock(dst[i:i+r], x, p, cb[:r], w, r)
	}
}

// sampleUnits computes units from..to−1 of hidden layer l for r snapshots
// during ancestral sampling; cnt[l−1] units of the layer below are final.
func (m *Model) sampleUnits(p *prep, cb [][]float64, w *workspace, r, l, from, to int, cnt []int) {
	if to <= from {
		return
	}
	c := m.Cfg
	hw := c.Hidden[l]
	h := w.h[l]
	cols := to - from
	if l == 0 {
		for i := 0; i < r; i++ {
			copy(h[i*hw+from:i*hw+to], w.a0[i*hw+from:i*hw+to])
		}
	} else {
		prev := c.Hidden[l-1]
		k := cnt[l-1]
		if k == 0 {
			for i := 0; i < r; i++ {
				clear(h[i*hw+from : i*hw+to])
			}
		} else {
			blas64.Gemm(blas.NoTrans, blas.NoTrans, 1,
				blas64.General{Rows: r, Cols: k, Stride: prev, Data: w.h[l-1]},
				blas64.General{Rows: k, Cols: cols, Stride: hw, Data: p.eff[l][from:]},
				0, blas64.General{Rows: r, Cols: cols, Stride: hw, Data: h[from:]})
		}
	}
	b := cb[l][from:to]
	var g []float64 // FiLM scale
	if c.FiLM {
		g = cb[l][hw+from : hw+to]
	}
	relu := c.Activation == ReLU
	act := actFunc(c.Activation)
	for i := 0; i < r; i++ {
		row := h[i*hw+from : i*hw+to]
		for k := range row {
			v := row[k] + b[k]
			if g != nil {
				v *= g[k]
			}
			if relu {
				row[k] = relu0(v)
			} else {
				row[k] = act(v)
			}
		}
	}
}

// relu0 is max(v, 0) by the builtin max, which compiles without a branch
// (math.Max's special cases cost more than the comparison, and a branch on
// random signs is mispredicted half the time); a NaN passes through, as
// with math.Max, and −0 becomes +0.
func relu0(v float64) float64 {
	return max(v, 0)
}

func grow64(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}

// drawCategorical returns the state k of probability softmax(z)_k that the
// uniform number u in [0, 1) picks (inverse CDF), using probs as scratch.
func drawCategorical(z, probs []float64, u float64) int {
	mx := z[0]
	for _, t := range z[1:] {
		mx = math.Max(mx, t)
	}
	tot := 0.0
	for k, t := range z {
		probs[k] = math.Exp(t - mx)
		tot += probs[k]
	}
	u *= tot
	acc := 0.0
	for k := 0; k < len(z)-1; k++ {
		acc += probs[k]
		if u < acc {
			return k
		}
	}
	return len(z) - 1
}

// forEachUnit runs work units 0..units−1 on up to threads goroutines, each
// handed out once from a shared counter. Every goroutine calls worker once
// for its unit function (with the scratch it owns) and a cleanup run when
// it stops. A panic in a unit becomes the returned error, naming what.
// Which goroutine runs a unit never changes its result.
func forEachUnit(threads, units int, what string, worker func() (do func(u int), done func())) error {
	var next atomic.Int64
	var wg sync.WaitGroup
	var once sync.Once
	var err error
	for t := 0; t < min(threads, units); t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() {
				if r := recover(); r != nil {
					once.Do(func() { err = fmt.Errorf("model: %s failed: %v", what, r) })
				}
			}()
			do, done := worker()
			defer done()
			for {
				u := int(next.Add(1)) - 1
				if u >= units {
					return
				}
				do(u)
			}
		}()
	}
	wg.Wait()
	return err
}
