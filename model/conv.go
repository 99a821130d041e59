package model

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	"tidemark/model/vmath"
)

// ConvConfig makes a model a masked convolutional network over a periodic
// Height×Width lattice (sites stored row-major) instead of a dense MADE:
// every masked layer's weights are shared across lattice translations and
// reach only the sites of a window before the current one (a masked
// convolution; A. van den Oord, N. Kalchbrenner and K. Kavukcuoglu, "Pixel
// recurrent neural networks", ICML 2016; used for lattice models by D. Wu,
// L. Wang and P. Zhang, Phys. Rev. Lett. 122, 080602 (2019)). The number of
// weights does not depend on the lattice size.
//
// The autoregressive order is row-major (Config.Order must be the
// identity). A layer at site (y, x) reads the sites (y+dy, x+dx) with
// −Window ≤ dy ≤ 0 and |dx| ≤ Window that come before it in that order
// (the first hidden layer and the direct connection), or before it or at
// it (the later layers and the output layer, which reads only the site
// itself). Columns wrap around (periodic boundaries), which keeps a
// wrapped site of an earlier row earlier in the order; rows do not wrap,
// since the rows below come later; sites outside the lattice or later in
// the order read as zero. Spins enter as ±1 for q = 2 and one-hot for
// q > 2, so a missing neighbour (0) differs from every state.
//
// Config.Hidden lists the channels of the hidden layers; FiLM and the
// additive conditioning act per channel, the same at every site;
// Config.Direct adds a first-layer-shaped convolution of the input
// straight to the logits. All arithmetic is float64 (Config.Precision is
// accepted and ignored).
type ConvConfig struct {
	Height int `json:"height"`
	Width  int `json:"width"`
	Window int `json:"window"` // ≥ 1
}

// MaxConvWindow bounds ConvConfig.Window.
const MaxConvWindow = 64

func (cc *ConvConfig) validate(sites int, order []int) error {
	if cc.Height < 1 || cc.Width < 1 || cc.Height*cc.Width != sites {
		return fmt.Errorf("model config: conv lattice must be height×width = %d sites, found %d×%d", sites, cc.Height, cc.Width)
	}
	if cc.Window < 1 || cc.Window > MaxConvWindow {
		return fmt.Errorf("model config: conv window must be in 1..%d, found %d", MaxConvWindow, cc.Window)
	}
	for i, s := range order {
		if s != i {
			return fmt.Errorf("model config: conv needs the row-major order, found site %d at position %d", s, i)
		}
	}
	return nil
}

// convOffsets returns the window offsets (dy, dx) of a layer: those before
// the centre in row-major order, and the centre itself when self is set.
func convOffsets(k int, self bool) [][2]int {
	var o [][2]int
	for dy := -k; dy <= 0; dy++ {
		for dx := -k; dx <= k; dx++ {
			if dy == 0 && (dx > 0 || (dx == 0 && !self)) {
				continue
			}
			o = append(o, [2]int{dy, dx})
		}
	}
	return o
}

// convIndex returns, for every site s and offset p, the site that offset p
// reads at s, or −1 where it reads zero (outside the lattice or not
// earlier in the order, or not s itself for the centre).
func convIndex(cc *ConvConfig, offs [][2]int) []int32 {
	H, W := cc.Height, cc.Width
	P := len(offs)
	idx := make([]int32, H*W*P)
	for y := 0; y < H; y++ {
		for x := 0; x < W; x++ {
			s := y*W + x
			for p, o := range offs {
				yy, xx := y+o[0], x+o[1]
				t := int32(-1)
				if yy >= 0 {
					if o[0] < 0 {
						xx = ((xx % W) + W) % W
						t = int32(yy*W + xx)
					} else if xx >= 0 && xx < W {
						t = int32(yy*W + xx)
					}
				}
				if t > int32(s) || (t == int32(s) && o != [2]int{}) {
					t = -1
				}
				idx[s*P+p] = t
			}
		}
	}
	return idx
}

// convNet is the fixed structure of a convolutional model.
type convNet struct {
	H, W, N  int
	inC      int       // input channels: 1 for q = 2, q otherwise
	ch       []int     // channels of each layer's input: inC, Hidden...
	offsA    int       // offsets of the first layer and the direct term
	offsB    int       // offsets of the later hidden layers
	idxA     []int32   // [N][offsA]
	idxB     []int32   // [N][offsB]
	fanIn    []float64 // per masked layer (hidden, output), for initialisation
	fanInDir float64
}

func newConvNet(c Config) *convNet {
	cc := c.Conv
	a := convOffsets(cc.Window, false)
	b := convOffsets(cc.Window, true)
	n := &convNet{H: cc.Height, W: cc.Width, N: c.Sites, offsA: len(a), offsB: len(b),
		idxA: convIndex(cc, a), idxB: convIndex(cc, b)}
	n.inC = c.inDim() / c.Sites
	n.ch = append([]int{n.inC}, c.Hidden...)
	return n
}

// rowsOf returns the weight matrix rows of masked layer l (hidden layers
// 0..L−1, output layer L).
func (n *convNet) rowsOf(l int) int {
	switch {
	case l == 0:
		return n.offsA * n.inC
	case l < len(n.ch)-1:
		return n.offsB * n.ch[l]
	}
	return n.ch[len(n.ch)-1]
}

// newConvLayout lays out the weights of a convolutional model: the
// conditioning net, then per masked layer L conv.wL [window·in, out],
// conv.bL and cond.vL, then conv.direct, then the FiLM heads cond.sL.
func newConvLayout(c Config) layout {
	l := condLayout(c)
	add := l.add
	n := newConvNet(c)
	widths := append(append([]int(nil), c.Hidden...), l.per)
	for i, h := range widths {
		l.madeW = append(l.madeW, add(fmt.Sprintf("conv.w%d", i), n.rowsOf(i), h))
		l.madeB = append(l.madeB, add(fmt.Sprintf("conv.b%d", i), h))
		l.condV = append(l.condV, add(fmt.Sprintf("cond.v%d", i), l.condOut, h))
	}
	if c.Direct {
		l.direct = add("conv.direct", n.offsA*n.inC, l.per)
	}
	if c.FiLM {
		for i, h := range widths {
			l.condS = append(l.condS, add(fmt.Sprintf("cond.s%d", i), l.condOut, h))
		}
	}
	return *l
}

// convCond holds the conditioning of one row: the conditioning net's
// hidden activations and, per masked layer, the shift (bias + u·V) and
// the scale γ = 1 + u·S.
type convCond struct {
	phi   []float64
	zs    [][]float64 // pre-activations of the conditioning layers
	hs    [][]float64 // outputs of the conditioning layers
	shift [][]float64
	gamma [][]float64
}

func (m *Model) convCondOf(lambda []float64) *convCond {
	c := m.Cfg
	l := m.lay
	cc := &convCond{phi: make([]float64, c.featDim())}
	c.features(cc.phi, lambda)
	act := actFunc(c.condAct())
	u := cc.phi
	for i, w := range l.condW {
		wt, b := m.Weights[w], m.Weights[l.condB[i]].Data
		h := append([]float64(nil), b...)
		out := wt.Shape[1]
		for j, v := range u {
			if v == 0 {
				continue
			}
			row := wt.Data[j*out : (j+1)*out]
			for k := range h {
				h[k] += v * row[k]
			}
		}
		cc.zs = append(cc.zs, append([]float64(nil), h...))
		for k := range h {
			h[k] = act(h[k])
		}
		cc.hs = append(cc.hs, h)
		u = h
	}
	for i := range l.madeW {
		sh := append([]float64(nil), m.Weights[l.madeB[i]].Data...)
		vecMatAdd(sh, u, m.Weights[l.condV[i]])
		cc.shift = append(cc.shift, sh)
		g := make([]float64, len(sh))
		for k := range g {
			g[k] = 1
		}
		if c.FiLM {
			vecMatAdd(g, u, m.Weights[l.condS[i]])
		}
		cc.gamma = append(cc.gamma, g)
	}
	return cc
}

// vecMatAdd adds u·W to dst.
func vecMatAdd(dst, u []float64, w Tensor) {
	out := w.Shape[1]
	for j, v := range u {
		row := w.Data[j*out : (j+1)*out]
		for k := range dst {
			dst[k] += v * row[k]
		}
	}
}

// convWork holds the activations of a block of rows.
type convWork struct {
	x0  []float64   // input encoding [r·N, inC]
	g   []float64   // gather buffer
	pre [][]float64 // per masked layer: the product plus shift, before γ
	h   [][]float64 // per hidden layer: the activation
	dh  []float64   // backward buffers
	dh2 []float64
	dp  []float64
}

func (m *Model) convRowsPerBlock() int { return max(1, 8192/m.Cfg.Sites) }

func (m *Model) newConvWork(r int) *convWork {
	n := m.conv
	c := m.Cfg
	w := &convWork{x0: make([]float64, r*n.N*n.inC)}
	maxG := n.offsA * n.inC
	for l := range c.Hidden {
		maxG = max(maxG, n.rowsOf(l))
		w.h = append(w.h, make([]float64, r*n.N*c.Hidden[l]))
	}
	for l := 0; l <= len(c.Hidden); l++ {
		w.pre = append(w.pre, make([]float64, r*n.N*m.Weights[m.lay.madeW[l]].Shape[1]))
	}
	maxC := m.lay.per
	for _, h := range c.Hidden {
		maxC = max(maxC, h)
	}
	w.g = make([]float64, r*n.N*maxG)
	w.dh = make([]float64, r*n.N*maxC)
	w.dh2 = make([]float64, r*n.N*maxC)
	w.dp = make([]float64, r*n.N*maxC)
	return w
}

// encode writes the input channels of r snapshots (flipped if flip).
func (m *Model) convEncode(w *convWork, xs []uint8, r int, flip bool) {
	n := m.conv
	x0 := w.x0[:r*n.N*n.inC]
	if n.inC == 1 {
		for i, v := range xs[:r*n.N] {
			s := 2*float64(v) - 1
			if flip {
				s = -s
			}
			x0[i] = s
		}
		return
	}
	clear(x0)
	for i, v := range xs[:r*n.N] {
		x0[i*n.inC+int(v)] = 1
	}
}

// convGather writes the im2col matrix [r·N, P·C] of src [r·N, C].
func convGather(dst, src []float64, idx []int32, r, N, P, C int) {
	for i := 0; i < r; i++ {
		base := i * N
		for s := 0; s < N; s++ {
			row := dst[(base+s)*P*C : (base+s+1)*P*C]
			for p, t := range idx[s*P : (s+1)*P] {
				seg := row[p*C : (p+1)*C]
				if t < 0 {
					clear(seg)
				} else {
					copy(seg, src[(base+int(t))*C:(base+int(t)+1)*C])
				}
			}
		}
	}
}

// convScatter adds the im2col gradient g [r·N, P·C] back into dst [r·N, C].
func convScatter(dst, g []float64, idx []int32, r, N, P, C int) {
	for i := 0; i < r; i++ {
		base := i * N
		for s := 0; s < N; s++ {
			row := g[(base+s)*P*C : (base+s+1)*P*C]
			for p, t := range idx[s*P : (s+1)*P] {
				if t < 0 {
					continue
				}
				d := dst[(base+int(t))*C : (base+int(t)+1)*C]
				for k, v := range row[p*C : (p+1)*C] {
					d[k] += v
				}
			}
		}
	}
}

func gemmNN(beta float64, a []float64, ar, ac int, b []float64, bc int, c []float64) {
	blas64.Gemm(blas.NoTrans, blas.NoTrans, 1,
		blas64.General{Rows: ar, Cols: ac, Stride: ac, Data: a},
		blas64.General{Rows: ac, Cols: bc, Stride: bc, Data: b},
		beta, blas64.General{Rows: ar, Cols: bc, Stride: bc, Data: c})
}

// convForward runs r snapshots (already encoded in w.x0) through the net
// with conditioning conds[i] for row i, leaving the logits' pre-γ values
// in w.pre[L] and the hidden activations in w.h.
func (m *Model) convForward(w *convWork, conds []*convCond, r int) {
	n, c, l := m.conv, m.Cfg, m.lay
	N := n.N
	L := len(c.Hidden)
	act := actFunc(c.Activation)
	softp := c.Activation == Softplus
	src := w.x0
	for k := 0; k <= L; k++ {
		wt := m.Weights[l.madeW[k]]
		rows, out := wt.Shape[0], wt.Shape[1]
		pre := w.pre[k][:r*N*out]
		switch {
		case k == 0:
			convGather(w.g, src, n.idxA, r, N, n.offsA, n.inC)
			gemmNN(0, w.g, r*N, rows, wt.Data, out, pre)
		case k < L:
			convGather(w.g, src, n.idxB, r, N, n.offsB, c.Hidden[k-1])
			gemmNN(0, w.g, r*N, rows, wt.Data, out, pre)
		default:
			gemmNN(0, src, r*N, rows, wt.Data, out, pre)
			if l.direct >= 0 {
				d := m.Weights[l.direct]
				convGather(w.g, w.x0, n.idxA, r, N, n.offsA, n.inC)
				gemmNN(1, w.g, r*N, d.Shape[0], d.Data, out, pre)
			}
		}
		for i := 0; i < r; i++ {
			sh := conds[i].shift[k]
			blk := pre[i*N*out : (i+1)*N*out]
			for j := 0; j < len(blk); j += out {
				for o := range out {
					blk[j+o] += sh[o]
				}
			}
			if k == L {
				continue
			}
			g := conds[i].gamma[k]
			h := w.h[k][i*N*out : (i+1)*N*out]
			if softp {
				// Vectorised over the whole block (model/vmath).
				for j := 0; j < len(blk); j += out {
					for o := range out {
						h[j+o] = g[o] * blk[j+o]
					}
				}
				vmath.Softplus(h, h)
				continue
			}
			for j := 0; j < len(blk); j += out {
				for o := range out {
					h[j+o] = act(g[o] * blk[j+o])
				}
			}
		}
		if k < L {
			src = w.h[k]
		}
	}
}

// convLogProbs writes log p of r encoded snapshots after convForward, and,
// when dz is not nil, rowW[i] times the gradient of log p by the logits
// (after γ) into dz.
func (m *Model) convLogProbs(dst []float64, xs []uint8, w *convWork, conds []*convCond, r int, flip bool, dz, rowW []float64) {
	n, c := m.conv, m.Cfg
	N, per, q := n.N, m.lay.per, c.Alphabet
	L := len(c.Hidden)
	pre := w.pre[L]
	for i := 0; i < r; i++ {
		g := conds[i].gamma[L]
		if q == 2 {
			// x·z − softplus(z) = x·z − max(z, 0) − log(1+e), e = e^−|z|,
			// with the logarithms of up to prodTerms sites taken as one
			// logarithm of their product (as rowLP2Go), and σ(z) from
			// the same e for the gradient (as bernBwdGo).
			s, prod := 0.0, 1.0
			for k := 0; k < N; k++ {
				v := float64(xs[i*N+k])
				if flip {
					v = 1 - v
				}
				zz := g[0] * pre[(i*N+k)*per]
				e := math.Exp(-math.Abs(zz))
				s += v*zz - math.Max(zz, 0)
				prod *= 1 + e
				if k%prodTerms == prodTerms-1 {
					s -= math.Log(prod)
					prod = 1
				}
				if dz != nil {
					sg := 1 / (1 + e)
					if zz < 0 {
						sg *= e
					}
					dz[i*N+k] = rowW[i] * (v - sg)
				}
			}
			dst[i] = s - math.Log(prod)
			continue
		}
		lp := 0.0
		for s := 0; s < N; s++ {
			v := int(xs[i*N+s])
			if flip {
				v = 1 - v
			}
			z := pre[(i*N+s)*per : (i*N+s+1)*per]
			mx := math.Inf(-1)
			for o := range per {
				mx = math.Max(mx, g[o]*z[o])
			}
			t := 0.0
			for o := range per {
				t += math.Exp(g[o]*z[o] - mx)
			}
			lse := mx + math.Log(t)
			lp += g[v]*z[v] - lse
			if dz != nil {
				d := dz[(i*N+s)*per : (i*N+s+1)*per]
				for o := range per {
					d[o] = -rowW[i] * math.Exp(g[o]*z[o]-lse)
				}
				d[v] += rowW[i]
			}
		}
		dst[i] = lp
	}
}

// convScore writes log p (or the symmetric log p) of r snapshots.
func (m *Model) convScore(dst []float64, xs []uint8, w *convWork, conds []*convCond, r int) {
	m.convEncode(w, xs, r, false)
	m.convForward(w, conds, r)
	m.convLogProbs(dst, xs, w, conds, r, false, nil, nil)
	if !m.Cfg.Symmetric {
		return
	}
	b := make([]float64, r)
	m.convEncode(w, xs, r, true)
	m.convForward(w, conds, r)
	m.convLogProbs(b, xs, w, conds, r, true, nil, nil)
	for i := range r {
		dst[i] = logAddExp(dst[i], b[i]) - math.Ln2
	}
}

func logAddExp(a, b float64) float64 {
	if a < b {
		a, b = b, a
	}
	return a + math.Log1p(math.Exp(b-a))
}

func actDeriv(name Activation, h, a float64) float64 {
	switch name {
	case Tanh:
		return 1 - h*h
	case Softplus:
		return 1 / (1 + math.Exp(-a))
	}
	if a > 0 {
		return 1
	}
	return 0
}
