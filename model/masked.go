package model

import (
	"fmt"
	"hash"
	"math"

	"tidemark/data/textenum"

	"github.com/chewxy/hm"
	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/blas/blas64"
)

// tileSize is the width of the column (and row) blocks into which a masked
// product is split; blocks whose mask is all zero are skipped.
const tileSize = 64

// tile is one block of a masked weight [in, out]: the columns (or rows)
// a0..a1 and the range lo..hi of rows (or columns) that hold every nonzero
// mask entry of the block.
type tile struct {
	a0, a1, lo, hi int
	// full[j−lo] says row j of a column block has mask 1 in every column
	// a0..a1−1, so multiplying by the mask can be skipped there (most rows
	// of a triangular mask); only column blocks set it.
	full []bool
}

// tiling is the block structure of one mask. Because hidden units are
// sorted by degree (and inputs are in site order, which is degree order for
// the row-major ordering), a MADE mask is block triangular: the nonzero rows
// of a column block form a prefix, so skipping the rest does about half the
// work of a dense product (Germain et al., ICML 2015, define the masks;
// skipping zero blocks is common practice for structured sparsity).
type tiling struct {
	in, out int
	cols    []tile // column blocks: rows lo..hi are the nonzero ones
	rows    []tile // row blocks: columns lo..hi are the nonzero ones
	mask    []float64
	// allCols (allRows) says the column (row) blocks cover every column
	// (row): a product written block by block then needs no clearing first.
	allCols, allRows bool
}

// bandRows is the number of rows rowBands hands out at a time.
const bandRows = 16

// rowBands calls f with the part of each column block of cols that lies in
// rows j0..j1−1, for bands of bandRows rows from the first nonzero row to
// the last, block after block within a band. A pass over the blocks then
// reads the matrices nearly row by row: walking one column block down its
// rows instead steps by a whole matrix row (32 KB at 4096 float64 columns)
// on every row, which defeats the caches and the prefetchers (measured
// 5× slower than a row-major pass on a 64×64 lattice's windowed direct
// connection, BenchmarkPrepareMasked32). The tile passed to f
// holds the rows max(j0, c.lo)..min(j1, c.hi)−1 of c, with its own full.
func rowBands(cols []tile, f func(c tile)) {
	lo, hi := math.MaxInt, 0
	for _, c := range cols {
		if c.hi > c.lo {
			lo, hi = min(lo, c.lo), max(hi, c.hi)
		}
	}
	for j0 := lo; j0 < hi; j0 += bandRows {
		j1 := min(j0+bandRows, hi)
		for _, c := range cols {
			a, b := max(j0, c.lo), min(j1, c.hi)
			if a >= b {
				continue
			}
			s := tile{a0: c.a0, a1: c.a1, lo: a, hi: b}
			if c.full != nil {
				s.full = c.full[a-c.lo : b-c.lo]
			}
			f(s)
		}
	}
}

func newTiling(mask []float64, in, out int) tiling {
	return newTilingSize(mask, in, out, tileSize)
}

// newTilingSize is newTiling with blocks of the given width.
func newTilingSize(mask []float64, in, out, tileSize int) tiling {
	t := tiling{in: in, out: out, mask: mask}
	// The column blocks' nonzero rows and their all-ones rows, found in one
	// pass over the mask in row order (see rowBands for why not block by
	// block).
	nb := (out + tileSize - 1) / tileSize
	los, his := make([]int, nb), make([]int, nb)
	ones := make([][]bool, nb) // ones[b][j]: row j of block b is all ones
	for b := range nb {
		los[b], ones[b] = in, make([]bool, in)
	}
	for j := 0; j < in; j++ {
		row := mask[j*out : (j+1)*out]
		for b := range nb {
			seg := row[b*tileSize : min((b+1)*tileSize, out)]
			nz, all := false, true
			for _, v := range seg {
				if v != 0 {
					nz = true
				}
				if v != 1 {
					all = false
				}
			}
			if nz {
				los[b], his[b] = min(los[b], j), j+1
			}
			ones[b][j] = all
		}
	}
	for b := range nb {
		if lo, hi := los[b], his[b]; hi > lo {
			full := append([]bool(nil), ones[b][lo:hi]...)
			t.cols = append(t.cols, tile{b * tileSize, min((b+1)*tileSize, out), lo, hi, full})
		}
	}
	for r0 := 0; r0 < in; r0 += tileSize {
		r1 := min(r0+tileSize, in)
		lo, hi := out, 0
		for j := r0; j < r1; j++ {
			for k := 0; k < out; k++ {
				if mask[j*out+k] != 0 {
					lo = min(lo, k)
					break
				}
			}
			for k := out - 1; k >= 0; k-- {
				if mask[j*out+k] != 0 {
					hi = max(hi, k+1)
					break
				}
			}
		}
		if hi > lo {
			t.rows = append(t.rows, tile{a0: r0, a1: r1, lo: lo, hi: hi})
		}
	}
	t.allCols = len(t.cols) == (out+tileSize-1)/tileSize
	t.allRows = len(t.rows) == (in+tileSize-1)/tileSize
	return t
}

// work returns the number of multiply–adds of one row through the tiled
// product (the dense product has in·out).
func (t tiling) work() int {
	w := 0
	for _, c := range t.cols {
		w += (c.a1 - c.a0) * (c.hi - c.lo)
	}
	return w
}

// maskedLinear is the state shared by the three gorgonia operations of one
// masked dense product Y = X·(W⊙M): the forward product and the two
// products of its gradient, dX = dY·(W⊙M)ᵀ and dW = (Xᵀ·dY)⊙M. They are
// written by hand on BLAS, block by block, so that the all-zero blocks of
// the mask are skipped and no buffer is allocated per step; gorgonia still
// builds the graph, orders the operations and differentiates everything
// else. With f32 the products run in single precision (the inputs are
// rounded to float32, the products accumulate in float32 and are widened
// back); everything outside the products stays float64.
type maskedLinear struct {
	name   string
	t      tiling
	needDX bool
	f32    bool

	weff   []float64 // W⊙M of the current step
	weff32 []float32
	x32    []float32 // scratch for float32 operands
	fx32   []float32 // the float32 input of the last forward product
	y32    []float32
	dy32   []float32     // float32 copy of this step's output gradient dY
	next   *maskedLinear // the product that reads this layer's output, if any
	fxOK   bool          // fx32 already holds this step's input (written by the layer below)
	dyOK   bool          // dy32 holds this step's dY (reset by forward)
	g32    []float32     // float32 weight gradient
	bufs   [5][]float64  // output buffers of forward, dX, dW, activation gradient, bias gradient

	// fused: the forward operation takes two more inputs, a bias matrix Hd
	// [rows, out] and a bias vector b [out], and returns
	// act(X·(W⊙M) + Hd + b), with act one of actNone, actRelu, actTanh.
	fused bool
	act   int
	dst   []float64 // when set (len in·out), dW is written here instead
	// privDst says dst is private to this graph (nobody else writes it),
	// so its entries outside the blocks stay zero once written; clean is
	// the first element of the dW array last written with those zeros.
	privDst bool
	clean   *float64
	// defer32: gradW leaves its float32 result in g32 and dW untouched;
	// the BatchGraph combines the chunks' g32 itself (see combine32).
	defer32 bool

	// grp, when set and on, groups the rows of x that are equal (the
	// conditioning heads; see rowGroups): the products then run on one
	// row per group, gathered in xu, with yu, dyu and dxu their output,
	// summed output gradient and input gradient.
	grp      *rowGroups
	xu, yu   []float64
	dyu, dxu []float64
	dyuOK    bool
}

func (ml *maskedLinear) buf(i, n int) []float64 {
	if cap(ml.bufs[i]) < n {
		ml.bufs[i] = make([]float64, n)
	}
	return ml.bufs[i][:n]
}

func to32(dst []float32, src []float64) []float32 {
	if cap(dst) < len(src) {
		dst = make([]float32, len(src))
	}
	dst = dst[:len(src)]
	vTo32(dst, src)
	return dst
}

func grow32(b []float32, n int) []float32 {
	if cap(b) < n {
		return make([]float32, n)
	}
	return b[:n]
}

// prepareW computes W⊙M inside the nonzero blocks, in float32 with f32
// (the float64 copy is then not kept); entries outside the blocks are zero
// and never read.
func (ml *maskedLinear) prepareW(w []float64) {
	ml.prepareCols(w, 0, len(ml.t.cols))
}

// prepareCols is prepareW for the column blocks c0..c1−1 only, so that
// the blocks of one weight can be prepared by several goroutines.
func (ml *maskedLinear) prepareCols(w []float64, c0, c1 int) {
	n := ml.t.in * ml.t.out
	mask := ml.t.mask
	out := ml.t.out
	if ml.f32 {
		if ml.weff32 == nil {
			ml.weff32 = make([]float32, n)
		}
		masked32(ml.weff32, w, ml.t, ml.t.cols[c0:c1])
		return
	}
	if ml.weff == nil {
		ml.weff = make([]float64, n)
	}
	rowBands(ml.t.cols[c0:c1], func(c tile) {
		for j := c.lo; j < c.hi; j++ {
			r := j * out
			d, src, mk := ml.weff[r+c.a0:r+c.a1], w[r+c.a0:r+c.a1], mask[r+c.a0:r+c.a1]
			if c.full[j-c.lo] {
				copy(d, src)
				continue
			}
			for k := range d {
				d[k] = src[k] * mk[k]
			}
		}
	})
}

// shareW gives all masked products of one weight one W⊙M buffer, which
// the first of them prepares once per step (see Graph.prepare).
func shareW(mls []*maskedLinear) {
	if len(mls) == 0 {
		return
	}
	n := mls[0].t.in * mls[0].t.out
	var w64 []float64
	var w32 []float32
	if mls[0].f32 {
		w32 = make([]float32, n)
	} else {
		w64 = make([]float64, n)
	}
	for _, ml := range mls {
		ml.weff, ml.weff32 = w64, w32
	}
}

// gemm computes C = A·B (op per transpose flags) on general row-major
// sub-matrices given by data slices and strides, in float64 or float32.
type bmat struct {
	r, c, s int
	d64     []float64
	d32     []float32
}

func gemm(tA, tB blas.Transpose, alpha float64, a, b bmat, beta float64, c bmat) {
	if a.d32 != nil {
		blas32.Gemm(tA, tB, float32(alpha),
			blas32.General{Rows: a.r, Cols: a.c, Stride: a.s, Data: a.d32},
			blas32.General{Rows: b.r, Cols: b.c, Stride: b.s, Data: b.d32},
			float32(beta), blas32.General{Rows: c.r, Cols: c.c, Stride: c.s, Data: c.d32})
		return
	}
	blas64.Gemm(tA, tB, alpha,
		blas64.General{Rows: a.r, Cols: a.c, Stride: a.s, Data: a.d64},
		blas64.General{Rows: b.r, Cols: b.c, Stride: b.s, Data: b.d64},
		beta, blas64.General{Rows: c.r, Cols: c.c, Stride: c.s, Data: c.d64})
}

// sub returns the block rows r0.., columns c0.. of a row-major matrix with
// stride s and the given size.
func sub64(d []float64, s, r0, c0, rows, cols int) bmat {
	return bmat{r: rows, c: cols, s: s, d64: d[r0*s+c0:]}
}

func sub32(d []float32, s, r0, c0, rows, cols int) bmat {
	return bmat{r: rows, c: cols, s: s, d32: d[r0*s+c0:]}
}

// forward computes y = x·(W⊙M) for b rows, or adds it to y with acc;
// prepareW must have run (or weff and weff32 be set).
func (ml *maskedLinear) forward(y, x []float64, b int, acc bool) {
	in, out := ml.t.in, ml.t.out
	ml.dyOK = false
	if ml.f32 {
		ml.forward32(x, b)
		vTo64(y, ml.y32, acc)
		return
	}
	beta := 1.0
	if !acc {
		clear(y[:b*out])
		beta = 0
	}
	for _, c := range ml.t.cols {
		gemm(blas.NoTrans, blas.NoTrans, 1, sub64(x, in, 0, c.lo, b, c.hi-c.lo),
			sub64(ml.weff, out, c.lo, c.a0, c.hi-c.lo, c.a1-c.a0), beta, sub64(y, out, 0, c.a0, b, c.a1-c.a0))
	}
}

// forward32 computes ml.y32 = float32(x)·(W⊙M) for b rows in single
// precision, keeping the rounded input in ml.fx32 for the weight gradient.
func (ml *maskedLinear) forward32(x []float64, b int) {
	if !ml.fxOK || len(ml.fx32) != b*ml.t.in {
		ml.fx32 = to32(ml.fx32, x[:b*ml.t.in])
	}
	ml.fxOK = false
	ml.product32(b)
}

// product32 computes ml.y32 = ml.fx32·(W⊙M) for b rows in single
// precision, the float32 input already in ml.fx32.
func (ml *maskedLinear) product32(b int) {
	in, out := ml.t.in, ml.t.out
	ml.y32 = grow32(ml.y32, b*out)
	if !ml.t.allCols {
		clear(ml.y32)
	}
	for _, c := range ml.t.cols {
		gemm(blas.NoTrans, blas.NoTrans, 1, sub32(ml.fx32, in, 0, c.lo, b, c.hi-c.lo),
			sub32(ml.weff32, out, c.lo, c.a0, c.hi-c.lo, c.a1-c.a0), 0, sub32(ml.y32, out, 0, c.a0, b, c.a1-c.a0))
	}
}

// dyOf returns the float32 copy of the output gradient dy of b rows,
// converting it only once per step (the input and the weight gradient
// read the same dY).
func (ml *maskedLinear) dyOf(dy []float64, b int) []float32 {
	if !ml.dyOK {
		ml.dy32 = to32(ml.dy32, dy[:b*ml.t.out])
		ml.dyOK = true
	}
	return ml.dy32[:b*ml.t.out]
}

// gradX computes dx = dy·(W⊙M)ᵀ for b rows, block row by block row.
func (ml *maskedLinear) gradX(dx, dy []float64, b int) {
	in, out := ml.t.in, ml.t.out
	if ml.f32 {
		dy32 := ml.dyOf(dy, b)
		ml.x32 = grow32(ml.x32, b*in)
		if !ml.t.allRows {
			clear(ml.x32)
		}
		for _, r := range ml.t.rows {
			gemm(blas.NoTrans, blas.Trans, 1, sub32(dy32, out, 0, r.lo, b, r.hi-r.lo),
				sub32(ml.weff32, out, r.a0, r.lo, r.a1-r.a0, r.hi-r.lo), 0, sub32(ml.x32, in, 0, r.a0, b, r.a1-r.a0))
		}
		vTo64(dx, ml.x32, false)
		return
	}
	clear(dx[:b*in])
	for _, r := range ml.t.rows {
		gemm(blas.NoTrans, blas.Trans, 1, sub64(dy, out, 0, r.lo, b, r.hi-r.lo),
			sub64(ml.weff, out, r.a0, r.lo, r.a1-r.a0, r.hi-r.lo), 0, sub64(dx, in, 0, r.a0, b, r.a1-r.a0))
	}
}

// gradW computes dw = (xᵀ·dy)⊙M for b rows. Every entry of dw is
// written: the products inside the nonzero blocks, zeros outside.
func (ml *maskedLinear) gradW(dw, x, dy []float64, b int) {
	in, out := ml.t.in, ml.t.out
	mask := ml.t.mask
	// The zeros outside the blocks need writing only once into an array
	// nobody else writes.
	zero := ml.clean == nil || &dw[0] != ml.clean
	if zero && !ml.t.allCols && !ml.defer32 {
		clear(dw)
	}
	if ml.f32 {
		// The forward product of this step has already rounded x.
		x32 := ml.fx32[:b*in]
		y32 := ml.dyOf(dy, b)
		w32 := grow32(ml.g32, in*out)
		ml.g32 = w32
		for _, c := range ml.t.cols {
			gemm(blas.Trans, blas.NoTrans, 1, sub32(x32, in, 0, c.lo, b, c.hi-c.lo),
				sub32(y32, out, 0, c.a0, b, c.a1-c.a0), 0, sub32(w32, out, c.lo, c.a0, c.hi-c.lo, c.a1-c.a0))
			if zero && !ml.defer32 {
				ml.zeroOutside(dw, c)
			}
		}
		if ml.defer32 {
			return
		}
		rowBands(ml.t.cols, func(c tile) {
			for j := c.lo; j < c.hi; j++ {
				r := j * out
				d, g, mk := dw[r+c.a0:r+c.a1], w32[r+c.a0:r+c.a1], mask[r+c.a0:r+c.a1]
				if c.full[j-c.lo] {
					for k := range d {
						d[k] = float64(g[k])
					}
					continue
				}
				for k := range d {
					d[k] = float64(g[k]) * mk[k]
				}
			}
		})
		return
	}
	for _, c := range ml.t.cols {
		gemm(blas.Trans, blas.NoTrans, 1, sub64(x, in, 0, c.lo, b, c.hi-c.lo),
			sub64(dy, out, 0, c.a0, b, c.a1-c.a0), 0, sub64(dw, out, c.lo, c.a0, c.hi-c.lo, c.a1-c.a0))
		if zero {
			ml.zeroOutside(dw, c)
		}
		for j := c.lo; j < c.hi; j++ {
			r := j * out
			if c.full[j-c.lo] {
				continue
			}
			d, mk := dw[r+c.a0:r+c.a1], mask[r+c.a0:r+c.a1]
			for k := range d {
				d[k] *= mk[k]
			}
		}
	}
}

// combine32 writes dst = Σ_c f[c]·float64(g32 of mls[c]) ⊙ M for the rows
// r0..r1−1 of the weight the products mls (one per chunk graph, same
// tiling) share: their float32 weight gradients of this step, combined
// without widening each first. Chunks with f[c] = 0 did not run and are
// left out.
func combine32(dst []float64, mls []*maskedLinear, f []float64, r0, r1 int) {
	t := mls[0].t
	out := t.out
	if !t.allCols {
		clear(dst[r0*out : r1*out])
	}
	var gs [][]float32
	var fs []float64
	for c, ml := range mls {
		if f[c] != 0 {
			gs, fs = append(gs, ml.g32), append(fs, f[c])
		}
	}
	// Band of rows by band of rows, every block within a band (see
	// rowBands): the rows r0..r1−1 of each block, cleared outside its
	// nonzero rows.
	for j0 := r0; j0 < r1; j0 += bandRows {
		j1 := min(j0+bandRows, r1)
		for _, b := range t.cols {
			combineBlock(dst, gs, fs, t, b, j0, j1)
		}
	}
}

// combineBlock is combine32 for the rows j0..j1−1 of column block b.
func combineBlock(dst []float64, gs [][]float32, fs []float64, t tiling, b tile, j0, j1 int) {
	out := t.out
	for j := j0; j < j1; j++ {
		r := j*out + b.a0
		d := dst[r : r+b.a1-b.a0]
		if j < b.lo || j >= b.hi || len(gs) == 0 {
			clear(d)
			continue
		}
		if len(gs) <= 2 {
			// The rows of the block in one call.
			jb := min(j1, b.hi)
			var g1 []float32
			f1 := 0.0
			if len(gs) == 2 {
				g1, f1 = gs[1], fs[1]
			}
			vCombine32(dst, gs[0], g1, fs[0], f1, t.mask, b, out, j, jb)
			j = jb - 1
			continue
		}
		for k := range d {
			d[k] = fs[0] * float64(gs[0][r+k])
		}
		for c := 1; c < len(gs); c++ {
			gc, fc := gs[c][r:r+len(d)], fs[c]
			for k := range d {
				d[k] += fc * float64(gc[k])
			}
		}
		if !b.full[j-b.lo] {
			mk := t.mask[r : r+len(d)]
			for k := range d {
				d[k] *= mk[k]
			}
		}
	}
}

// zeroOutside clears the rows of column block c of dw that lie outside
// its nonzero rows c.lo..c.hi.
func (ml *maskedLinear) zeroOutside(dw []float64, c tile) {
	out := ml.t.out
	for j := 0; j < ml.t.in; j++ {
		if j == c.lo {
			j = c.hi - 1
			continue
		}
		clear(dw[j*out+c.a0 : j*out+c.a1])
	}
}

// The activations a fused forward operation can apply.
const (
	actNone = iota
	actRelu
	actTanh
	actSoftplus
)

// reluGrad is d when the ReLU output o is positive, else 0, without a
// branch (o ≥ 0 is +0 exactly where the unit is off; the activations are
// written by max(·, 0), which gives +0, never −0).
func reluGrad(d, o float64) float64 {
	m := uint64(0)
	if math.Float64bits(o) != 0 {
		m = ^uint64(0)
	}
	return math.Float64frombits(math.Float64bits(d) & m)
}

// fusedAct writes res = act(float64(y32) + hd + b), b broadcast over the
// rows, and its float32 rounding into r32 unless r32 is nil.
func fusedAct(res []float64, r32 []float32, y32 []float32, hd, b []float64, act int) {
	out := len(b)
	if act != actTanh {
		vFusedAct(res, r32, y32, hd, b, len(y32)/out, out, act)
		return
	}
	for i := 0; i < len(y32)/out; i++ {
		r, y, h := res[i*out:(i+1)*out], y32[i*out:(i+1)*out], hd[i*out:(i+1)*out]
		for k, v := range y {
			r[k] = math.Tanh(float64(v) + h[k] + b[k])
		}
		if r32 != nil {
			q := r32[i*out : (i+1)*out]
			for k, v := range r {
				q[k] = float32(v)
			}
		}
	}
}

// productKind says which product of a maskedLinear a maskedOp computes.
type productKind int

// The products of a maskedLinear.
const (
	// productForward is Y = X·(W⊙M) with inputs (X, W), or act(X·(W⊙M) +
	// Hd + b) with inputs (X, W, Hd, b) when the layer is fused.
	productForward productKind = iota
	// productGradX is dX with inputs (dY, W).
	productGradX
	// productGradW is dW with inputs (X, dY).
	productGradW
	// productGradAct is the gradient through the activation, dY = dO ⊙
	// act'(O), with inputs (dO, O).
	productGradAct
	// productGradBias is the bias gradient db = Σ_rows dY with input dY.
	productGradBias
)

var productNames = [...]string{"forward", "grad-x", "grad-w", "grad-act", "grad-bias"}

// String returns the product's name.
func (k productKind) String() string { return textenum.Name(productNames[:], int(k), "productKind") }

// MarshalText returns the product's name.
func (k productKind) MarshalText() ([]byte, error) {
	return textenum.Marshal(productNames[:], int(k), "masked product")
}

// UnmarshalText reads a product's name.
func (k *productKind) UnmarshalText(b []byte) error {
	return textenum.Index(k, b, productNames[:], "masked product")
}

// maskedOp is one of the gorgonia operations of a maskedLinear, the product
// named by kind.
type maskedOp struct {
	ml   *maskedLinear
	kind productKind
}

var matF64 = G.TensorType{Dims: 2, Of: tensor.Float64}

func (op maskedOp) Arity() int {
	switch {
	case op.kind == productForward && op.ml.fused:
		return 4
	case op.kind == productGradBias:
		return 1
	}
	return 2
}

func (op maskedOp) Type() hm.Type {
	switch op.Arity() {
	case 4:
		return hm.NewFnType(matF64, matF64, matF64, vecF64, matF64)
	case 1:
		return hm.NewFnType(matF64, vecF64)
	}
	return hm.NewFnType(matF64, matF64, matF64)
}

func (op maskedOp) InferShape(in ...G.DimSizer) (tensor.Shape, error) {
	s0, err := matrixInput(op, in)
	if err != nil {
		return nil, err
	}
	switch op.kind {
	case productForward:
		return tensor.Shape{s0[0], op.ml.t.out}, nil
	case productGradX:
		return tensor.Shape{s0[0], op.ml.t.in}, nil
	case productGradAct:
		return tensor.Shape{s0[0], op.ml.t.out}, nil
	case productGradBias:
		return tensor.Shape{op.ml.t.out}, nil
	default:
		return tensor.Shape{op.ml.t.in, op.ml.t.out}, nil
	}
}

func f64Of(v G.Value) ([]float64, tensor.Shape, error) {
	t, ok := v.(tensor.Tensor)
	if !ok {
		return nil, nil, fmt.Errorf("model: masked product expects a tensor, found %T", v)
	}
	d, ok := t.Data().([]float64)
	if !ok {
		return nil, nil, fmt.Errorf("model: masked product expects float64 data, found %T", t.Data())
	}
	return d, t.Shape(), nil
}

// Do computes the product named by op.kind, one method of maskedLinear
// each.
func (op maskedOp) Do(inputs ...G.Value) (G.Value, error) {
	if len(inputs) != op.Arity() {
		return nil, fmt.Errorf("model: %v needs %d inputs, found %d", op, op.Arity(), len(inputs))
	}
	a, sa, err := f64Of(inputs[0])
	if err != nil {
		return nil, err
	}
	rows := sa[0]
	if op.kind == productGradBias {
		return op.ml.doGradBias(a, rows), nil
	}
	b, _, err := f64Of(inputs[1])
	if err != nil {
		return nil, err
	}
	switch op.kind {
	case productForward:
		return op.ml.doForward(a, rows, inputs[2:])
	case productGradAct:
		return op.ml.doGradAct(a, b, rows), nil
	case productGradX:
		return op.ml.doGradX(a, rows), nil
	default:
		return op.ml.doGradW(a, b, rows), nil
	}
}

// doGradBias is the bias gradient db = Σ_rows dY of dY = a.
func (ml *maskedLinear) doGradBias(a []float64, rows int) G.Value {
	out := ml.t.out
	db := ml.buf(4, out)
	clear(db)
	vColSum(db, a[:rows*out], rows, out)
	return tensor.New(tensor.WithShape(out), tensor.WithBacking(db))
}

// doForward is Y = X·(W⊙M) of X = a, or the fused layer act(X·(W⊙M) + Hd
// + b) with hdb = (Hd, b). W⊙M was prepared before the run
// (Graph.prepare).
func (ml *maskedLinear) doForward(a []float64, rows int, hdb []G.Value) (G.Value, error) {
	out := ml.t.out
	res := ml.buf(0, rows*out)
	shape := tensor.Shape{rows, out}
	switch {
	case ml.fused:
		hd, _, err := f64Of(hdb[0])
		if err != nil {
			return nil, err
		}
		bias, _, err := f64Of(hdb[1])
		if err != nil {
			return nil, err
		}
		if ml.f32 {
			// One pass widens the product, adds the biases and applies the
			// activation.
			ml.dyOK = false
			ml.forward32(a, rows)
			var next32 []float32
			if nx := ml.next; nx != nil && nx.f32 {
				// The layer above reads this output rounded to float32:
				// write that copy in the same pass.
				nx.fx32 = grow32(nx.fx32, rows*out)
				next32, nx.fxOK = nx.fx32, true
			}
			fusedAct(res, next32, ml.y32[:rows*out], hd[:rows*out], bias[:out], ml.act)
			break
		}
		for i := 0; i < rows; i++ {
			r, h := res[i*out:(i+1)*out], hd[i*out:(i+1)*out]
			for k := range r {
				r[k] = h[k] + bias[k]
			}
		}
		ml.forward(res, a, rows, true)
		switch ml.act {
		case actRelu, actSoftplus:
			// ReLU gives +0, never −0: see reluGrad.
			vAct64(res, nil, 1, len(res), ml.act)
		case actTanh:
			for i, v := range res {
				res[i] = math.Tanh(v)
			}
		}
	case ml.grouped(rows):
		ml.forwardGrouped(res, a, rows)
	default:
		ml.forward(res, a, rows, false)
	}
	return tensor.New(tensor.WithShape(shape...), tensor.WithBacking(res)), nil
}

// doGradAct is the gradient through the activation, dY = dO ⊙ act'(O), of
// dO = a and O = o.
func (ml *maskedLinear) doGradAct(a, o []float64, rows int) G.Value {
	out := ml.t.out
	res := ml.buf(3, rows*out)
	switch {
	case ml.act == actRelu && ml.f32:
		// The input and weight gradients of this product read the float32
		// copy, written here in the same pass.
		d32 := grow32(ml.dy32, rows*out)
		ml.dy32 = d32
		vReluGrad(res, d32, a[:rows*out], o[:rows*out])
		ml.dyOK = true
	case ml.act == actRelu:
		vReluGrad(res, nil, a[:rows*out], o[:rows*out])
	case ml.act == actTanh:
		for i, v := range o[:rows*out] {
			res[i] = a[i] * (1 - v*v)
		}
	case ml.act == actSoftplus:
		// softplus'(z) = σ(z) = 1 − e^(−softplus(z)).
		vSoftplusGrad(res, a[:rows*out], o[:rows*out])
	default:
		copy(res, a[:rows*out])
	}
	return tensor.New(tensor.WithShape(rows, out), tensor.WithBacking(res))
}

// doGradX is dX of dY = a. W⊙M was prepared by the forward operation of
// this step, which always runs first (dY depends on it).
func (ml *maskedLinear) doGradX(a []float64, rows int) G.Value {
	in := ml.t.in
	res := ml.buf(1, rows*in)
	if ml.grouped(rows) {
		ml.gradXGrouped(res, a, rows)
	} else {
		ml.gradX(res, a, rows)
	}
	return tensor.New(tensor.WithShape(rows, in), tensor.WithBacking(res))
}

// doGradW is dW of X = a and dY = dy.
func (ml *maskedLinear) doGradW(a, dy []float64, rows int) G.Value {
	in, out := ml.t.in, ml.t.out
	// (ml.buf(2) is not trusted: gorgonia may reuse a gradient node's value,
	// as it does other intermediate values.)
	res := ml.dst
	private := ml.privDst
	if len(res) != in*out {
		res, private = ml.buf(2, in*out), false
	}
	if ml.grouped(rows) {
		ml.gradWGrouped(res, dy)
	} else {
		ml.gradW(res, a, dy, rows)
	}
	ml.clean = nil
	if private {
		ml.clean = &res[0]
	}
	return tensor.New(tensor.WithShape(in, out), tensor.WithBacking(res))
}

func (op maskedOp) ReturnsPtr() bool     { return false }
func (op maskedOp) CallsExtern() bool    { return false }
func (op maskedOp) OverwritesInput() int { return -1 }

func (op maskedOp) WriteHash(h hash.Hash) { fmt.Fprint(h, op.String()) }

func (op maskedOp) Hashcode() uint32 { return opHash(op) }

func (op maskedOp) String() string {
	return fmt.Sprintf("masked%d(%s)", int(op.kind), op.ml.name)
}

// DiffWRT says which inputs the forward product is differentiated by: the
// weights always, X only when it is not the (constant) data.
func (op maskedOp) DiffWRT(int) []bool {
	if op.kind != productForward {
		return []bool{false, false}
	}
	if op.ml.fused {
		return []bool{op.ml.needDX, true, true, true}
	}
	return []bool{op.ml.needDX, true}
}

// SymDiff returns the gradient nodes of the forward product.
func (op maskedOp) SymDiff(inputs G.Nodes, output, grad *G.Node) (G.Nodes, error) {
	if op.kind != productForward {
		return nil, fmt.Errorf("model: %v is not differentiable", op)
	}
	var err error
	if op.ml.fused && op.ml.act != actNone {
		// Gradient with respect to the pre-activation.
		if grad, err = G.ApplyOp(maskedOp{op.ml, productGradAct}, grad, output); err != nil {
			return nil, err
		}
	}
	dw, err := G.ApplyOp(maskedOp{op.ml, productGradW}, inputs[0], grad)
	if err != nil {
		return nil, err
	}
	var dx *G.Node
	if op.ml.needDX {
		if dx, err = G.ApplyOp(maskedOp{op.ml, productGradX}, grad, inputs[1]); err != nil {
			return nil, err
		}
	}
	if op.ml.fused {
		db, err := G.ApplyOp(maskedOp{op.ml, productGradBias}, grad)
		if err != nil {
			return nil, err
		}
		return G.Nodes{dx, dw, grad, db}, nil
	}
	return G.Nodes{dx, dw}, nil
}

// denseTiling is the tiling of an all-ones mask [in, out]: one block, so
// a dense product (a conditioning head) is one GEMM.
func denseTiling(in, out int) tiling {
	ones := make([]float64, in*out)
	for i := range ones {
		ones[i] = 1
	}
	return newTilingSize(ones, in, out, max(in, out))
}

// maskedMul adds Y = X·(W⊙M) to the graph of X and the weight node W.
func maskedMul(x, w *G.Node, ml *maskedLinear) (*G.Node, error) {
	return G.ApplyOp(maskedOp{ml, productForward}, x, w)
}

// maskedLayer adds act(X·(W⊙M) + hd + b) to the graph, hd a node of shape
// [rows, out] and b a bias vector [out].
func maskedLayer(x, w, hd, b *G.Node, ml *maskedLinear, act int) (*G.Node, error) {
	ml.fused, ml.act = true, act
	return G.ApplyOp(maskedOp{ml, productForward}, x, w, hd, b)
}
