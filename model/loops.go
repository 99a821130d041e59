package model

import "math"

// The elementwise loops of the kernel and the training operations, in Go.
// The default build calls them through the v* functions of vec_goloops.go;
// the openblas build replaces those by C loops that gcc vectorises
// (vec_openblas.go, vec_openblas.c) and keeps these as the reference its
// tests compare against.

// to32Go is dst[k] = float32(src[k]) for every k of src.
func to32Go(dst []float32, src []float64) {
	dst = dst[:len(src)]
	for i, v := range src {
		dst[i] = float32(v)
	}
}

// to64Go is dst[k] = float64(src[k]) for every k of src, or dst[k] +=
// float64(src[k]) with acc.
func to64Go(dst []float64, src []float32, acc bool) {
	dst = dst[:len(src)]
	if acc {
		for i, v := range src {
			dst[i] += float64(v)
		}
		return
	}
	for i, v := range src {
		dst[i] = float64(v)
	}
}

// bernFwdGo is the forward pass of the q = 2 log-likelihood of rows rows
// of n sites: e = e^−|z| (kept for the gradient) and lp_i = Σ_k x·z −
// softplus(z), with softplus(v) = max(v, 0) + log(1 + e^−|v|); the
// logarithms of up to prodTerms sites are taken as one logarithm of their
// product, as in rowLogProbs. (scratch is unused here.)
func bernFwdGo(lp, e, x, z []float64, rows, n int, scratch []float64) {
	for i := range lp[:rows] {
		s := 0.0
		zi, xi, ei := z[i*n:(i+1)*n], x[i*n:(i+1)*n], e[i*n:(i+1)*n]
		prod := 1.0
		for k, v := range zi {
			e := math.Exp(-math.Abs(v))
			ei[k] = e
			t := xi[k] * v
			if v > 0 {
				t -= v
			}
			s += t
			prod *= 1 + e
			if k%prodTerms == prodTerms-1 {
				s -= math.Log(prod)
				prod = 1
			}
		}
		lp[i] = s - math.Log(prod)
	}
}

// states32Go writes the 0/1 inputs of the site values xs as float32: 1
// where (v == 1) differs from flip.
func states32Go(dst []float32, xs []uint8, flip bool) {
	dst = dst[:len(xs)]
	for k, v := range xs {
		dst[k] = 0
		if (v == 1) != flip {
			dst[k] = 1
		}
	}
}

// states32Bits is states32Go without a branch per site (random spins
// defeat the branch predictor): the values of a q = 2 snapshot are 0 or 1,
// so the input is the value, or 1 minus it when flip is set.
func states32Bits(dst []float32, xs []uint8, flip bool) {
	dst = dst[:len(xs)]
	var fb uint8
	if flip {
		fb = 1
	}
	for k, v := range xs {
		dst[k] = float32(v ^ fb)
	}
}

// bernBwdGo is its gradient dz = g_i·(x − σ(z)), with σ(z) from the
// forward pass's e = e^−|z|: 1/(1+e) for z ≥ 0, e/(1+e) below.
func bernBwdGo(dz, x, z, e, g []float64, rows, n int) {
	for i := 0; i < rows; i++ {
		gi := g[i]
		for k := i * n; k < (i+1)*n; k++ {
			s := 1 / (1 + e[k])
			if z[k] < 0 {
				s *= e[k]
			}
			dz[k] = gi * (x[k] - s)
		}
	}
}

// rowLP2Go writes the q = 2 log-likelihood of rows snapshots of n sites
// (states xs, every spin flipped when flip is set) from the logits z, row
// i at z[i·zs:]; see rowLogProbs. (scratch is unused here.)
func rowLP2Go(dst, z []float64, zs int, xs []uint8, n, rows int, flip bool, scratch []float64) {
	for i := 0; i < rows; i++ {
		x := xs[i*n : (i+1)*n]
		z := z[i*zs : i*zs+n]
		s := 0.0
		prod := 1.0
		for j, v := range x {
			zj := z[j]
			t := 0.0
			if zj > 0 {
				t = -zj
			}
			if (v == 1) != flip {
				t += zj
			}
			s += t
			prod *= 1 + math.Exp(-math.Abs(zj))
			if j%prodTerms == prodTerms-1 {
				s -= math.Log(prod)
				prod = 1
			}
		}
		dst[i] = s - math.Log(prod)
	}
}

// biasAct32Go is the scoring kernel's activation pass of rows rows of
// width w: dst = float32(act(src + b)), from src64 or (when src64 is nil)
// from src32, the bias b the same for every row, act actRelu or
// actSoftplus.
func biasAct32Go(dst []float32, src64 []float64, src32 []float32, b []float64, rows, w, act int) {
	b = b[:w]
	f := relu0
	if act == actSoftplus {
		f = softplus
	}
	for i := 0; i < rows; i++ {
		d := dst[i*w : (i+1)*w]
		if src64 != nil {
			s := src64[i*w : (i+1)*w]
			for k := range d {
				d[k] = float32(f(s[k] + b[k]))
			}
			continue
		}
		s := src32[i*w : (i+1)*w]
		for k := range d {
			d[k] = float32(f(float64(s[k]) + b[k]))
		}
	}
}

// act64Go is x = act(x + b) in place for rows rows of width w (b nil:
// x = act(x)), the bias b the same for every row, act actRelu or
// actSoftplus.
func act64Go(x, b []float64, rows, w, act int) {
	f := relu0
	if act == actSoftplus {
		f = softplus
	}
	x = x[:rows*w]
	if b == nil {
		for k, v := range x {
			x[k] = f(v)
		}
		return
	}
	b = b[:w]
	for i := 0; i < rows; i++ {
		r := x[i*w : (i+1)*w]
		for k := range r {
			r[k] = f(r[k] + b[k])
		}
	}
}

// logits32Go is z = (dx + float64(y)) + b for rows rows of width w (dx
// nil: z = float64(y) + b), the bias b the same for every row.
func logits32Go(z, dx []float64, y []float32, b []float64, rows, w int) {
	b = b[:w]
	for i := 0; i < rows; i++ {
		lo, hi := i*w, (i+1)*w
		zr, yr := z[lo:hi], y[lo:hi]
		if dx != nil {
			dr := dx[lo:hi]
			for k := range zr {
				zr[k] = (dr[k] + float64(yr[k])) + b[k]
			}
			continue
		}
		for k := range zr {
			zr[k] = float64(yr[k]) + b[k]
		}
	}
}

// fusedActGo is res = act(float64(y) + hd + b) for rows rows of width
// w, b broadcast over the rows, act actRelu, actSoftplus or actNone, and
// its float32 rounding into r32 unless r32 is nil.
func fusedActGo(res []float64, r32 []float32, y []float32, hd, b []float64, rows, w, act int) {
	b = b[:w]
	for i := 0; i < rows; i++ {
		r, y, h := res[i*w:(i+1)*w], y[i*w:(i+1)*w], hd[i*w:(i+1)*w]
		if act == actSoftplus {
			for k, v := range y {
				r[k] = softplus(float64(v) + h[k] + b[k])
			}
		} else if act == actNone {
			for k, v := range y {
				r[k] = float64(v) + h[k] + b[k]
			}
		} else {
			for k, v := range y {
				// The builtin max compiles without a branch, which
				// matters on random signs.
				r[k] = max(float64(v)+h[k]+b[k], 0)
			}
		}
		if r32 != nil {
			q := r32[i*w : (i+1)*w]
			for k, v := range r {
				q[k] = float32(v)
			}
		}
	}
}

// softplusGradGo is res = dO·softplus'(z) = −dO·expm1(−O) from the
// softplus output O (softplus'(z) = σ(z) = 1 − e^(−softplus(z))).
func softplusGradGo(res, a, o []float64) {
	a, res = a[:len(o)], res[:len(o)]
	for i, o := range o {
		res[i] = -a[i] * math.Expm1(-o)
	}
}

// reluGradGo is res = reluGrad(a, o) for every entry of o, and its float32
// rounding into d32 unless d32 is nil.
func reluGradGo(res []float64, d32 []float32, a, o []float64) {
	a, res = a[:len(o)], res[:len(o)]
	if d32 != nil {
		d32 = d32[:len(o)]
		for i, o := range o {
			v := reluGrad(a[i], o)
			res[i] = v
			d32[i] = float32(v)
		}
		return
	}
	for i, o := range o {
		res[i] = reluGrad(a[i], o)
	}
}

// colSumGo adds the rows rows of a [rows, w] to db, row after row.
func colSumGo(db, a []float64, rows, w int) {
	db = db[:w]
	for i := 0; i < rows; i++ {
		for k, v := range a[i*w : (i+1)*w] {
			db[k] += v
		}
	}
}

// masked32Go writes float32(w⊙mask) into dst inside column block c of
// matrices with out columns (rows whose mask is all ones there are only
// rounded).
func masked32Go(dst []float32, w, mask []float64, c tile, out int) {
	for j := c.lo; j < c.hi; j++ {
		r := j * out
		d, src, mk := dst[r+c.a0:r+c.a1], w[r+c.a0:r+c.a1], mask[r+c.a0:r+c.a1]
		if c.full[j-c.lo] {
			for k := range d {
				d[k] = float32(src[k])
			}
			continue
		}
		for k := range d {
			d[k] = float32(src[k] * mk[k])
		}
	}
}

// combine32Go writes dst = (f0·float64(g0) + f1·float64(g1))⊙mask (g1
// nil: f0·float64(g0)⊙mask) in the rows j0..j1−1 (within c.lo..c.hi) of
// column block c of matrices with out columns.
func combine32Go(dst []float64, g0, g1 []float32, f0, f1 float64, mask []float64, c tile, out, j0, j1 int) {
	for j := j0; j < j1; j++ {
		r := j*out + c.a0
		d := dst[r : r+c.a1-c.a0]
		x0 := g0[r : r+len(d)]
		if g1 != nil {
			x1 := g1[r : r+len(d)]
			for k := range d {
				d[k] = f0*float64(x0[k]) + f1*float64(x1[k])
			}
		} else {
			for k := range d {
				d[k] = f0 * float64(x0[k])
			}
		}
		if !c.full[j-c.lo] {
			mk := mask[r : r+len(d)]
			for k := range d {
				d[k] *= mk[k]
			}
		}
	}
}

// filmFwdGo writes o = p + p⊙s (the product rounded before the sum, as
// gorgonia's two operations round), through ReLU (reluTimes) when relu
// is set, and its float32 rounding into o32 unless o32 is nil.
func filmFwdGo(o []float64, o32 []float32, p, s []float64, relu bool) {
	n := len(o)
	p, s = p[:n], s[:n]
	if relu {
		for i, v := range p {
			a := v + float64(v*s[i])
			o[i] = reluTimes(a, a)
		}
	} else {
		for i, v := range p {
			o[i] = v + float64(v*s[i])
		}
	}
	if o32 != nil {
		o32 = o32[:n]
		for i, v := range o {
			o32[i] = float32(v)
		}
	}
}

// filmBwdGo writes dp = g + g⊙s and ds = g⊙p, with g = d where the ReLU
// output o is positive and a zero elsewhere when relu is set (reluTimes),
// else g = d, and the float32 rounding of dp into d32 unless it is nil.
func filmBwdGo(dp, ds []float64, d32 []float32, d, s, o, p []float64, relu bool) {
	n := len(dp)
	d, s, p, ds = d[:n], s[:n], p[:n], ds[:n]
	if relu {
		o = o[:n]
	}
	if d32 != nil {
		d32 = d32[:n]
	}
	put := func(i int, g float64) {
		v := g + float64(g*s[i])
		dp[i] = v
		ds[i] = g * p[i]
		if d32 != nil {
			d32[i] = float32(v)
		}
	}
	// One loop each, so that neither tests relu per entry.
	if relu {
		for i, g := range d {
			put(i, reluTimes(g, o[i]))
		}
		return
	}
	for i, g := range d {
		put(i, g)
	}
}
