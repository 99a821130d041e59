package vmath

import "math"

// Constants of the reductions and polynomials.
const (
	ln2Hi = 6.93147180369123816490e-01 // fdlibm's split of ln 2
	ln2Lo = 1.90821492927058770002e-10
	log2e = 1.44269504088896338700e+00
	l1    = 6.666666666666735130e-01 // fdlibm's log polynomial
	l2    = 3.999999999940941908e-01
	l3    = 2.857142874366239149e-01
	l4    = 2.222219843214978396e-01
	l5    = 1.818357216161805012e-01
	l6    = 1.531383769920937332e-01
	l7    = 1.479819860511658591e-01
	// MaxArg is the largest |x| whose e^−|x| is computed; beyond it e^−|x|
	// is taken as e^−708 ≈ 3.3e-308 (still a normal number), so softplus
	// of x < −708 is that instead of a smaller exact value.
	MaxArg = 708
)

// expTaylor are 1/n! for n = 13 down to 0, the Taylor polynomial of e^r.
var expTaylor = [14]float64{
	1.0 / 6227020800, 1.0 / 479001600, 1.0 / 39916800, 1.0 / 3628800, 1.0 / 362880,
	1.0 / 40320, 1.0 / 5040, 1.0 / 720, 1.0 / 120, 1.0 / 24, 1.0 / 6, 0.5, 1, 1,
}

// expNeg returns e^−a for 0 ≤ a ≤ MaxArg, as the assembly computes it.
func expNeg(a float64) float64 {
	k := math.RoundToEven(a * log2e) // 0 ≤ k ≤ 1022
	r := math.FMA(k, ln2Hi, -a)
	r = math.FMA(k, ln2Lo, r)
	p := expTaylor[0]
	for _, c := range expTaylor[1:] {
		p = math.FMA(p, r, c)
	}
	return p * math.Float64frombits(uint64(1023-int64(k))<<52)
}

// log1pUnit returns log(1+e) for 0 ≤ e ≤ 1: u = 1+e is rounded and the
// rounding error e − (u−1), exact, is added back as (e−(u−1))/u; log u is
// fdlibm's after one halving when u > √2. The fused multiply-adds are
// where the assembly has them, so that both give the same bits.
func log1pUnit(e float64) float64 {
	u := 1 + e
	corr := (e - (u - 1)) / u
	m, k := u, 0.0
	if u > math.Sqrt2 {
		m, k = u*0.5, 1
	}
	f := m - 1 // exact
	s := f / (2 + f)
	s2 := s * s
	s4 := s2 * s2
	t1 := s2 * math.FMA(math.FMA(math.FMA(l7, s4, l5), s4, l3), s4, l1)
	t2 := s4 * math.FMA(math.FMA(l6, s4, l4), s4, l2)
	hfsq := 0.5 * f * f
	a := math.FMA(k, ln2Lo, s*(hfsq+t1+t2))
	return math.FMA(k, ln2Hi, -((hfsq-a)-f)) + corr
}

// softplus1 is softplus(x) = max(x, 0) + log(1 + e^−|x|).
func softplus1(x float64) float64 {
	return math.Max(x, 0) + log1pUnit(expNeg(min(math.Abs(x), MaxArg)))
}

// sigmoid1 is σ(x) = 1/(1+e^−x), from e = e^−|x|: 1/(1+e) for x ≥ 0,
// e/(1+e) below.
func sigmoid1(x float64) float64 {
	e := expNeg(min(math.Abs(x), MaxArg))
	n := 1.0
	if x < 0 {
		n = e
	}
	return n / (1 + e)
}

// Softplus writes dst[i] = log(1 + e^src[i]) for every i < len(src); dst
// may be src. A NaN gives NaN, +Inf gives +Inf.
func Softplus(dst, src []float64) {
	dst = dst[:len(src)]
	n := 0
	if useAsm && len(src) >= 4 {
		n = len(src) &^ 3
		softplusAsm(&dst[0], &src[0], n)
	}
	for i := n; i < len(src); i++ {
		dst[i] = softplus1(src[i])
	}
}

// SigmoidMul writes dst[i] = σ(a[i])·d[i], σ(x) = 1/(1+e^−x), for every
// i < len(dst); dst may be a or d.
func SigmoidMul(dst, d, a []float64) {
	d, a = d[:len(dst)], a[:len(dst)]
	n := 0
	if useAsm && len(dst) >= 4 {
		n = len(dst) &^ 3
		sigmoidMulAsm(&dst[0], &d[0], &a[0], n)
	}
	for i := n; i < len(dst); i++ {
		dst[i] = sigmoid1(a[i]) * d[i]
	}
}

// Adam applies one step of Adam (D. P. Kingma and J. Ba, "Adam: a method
// for stochastic optimization", ICLR 2015) to the weights w with gradient g
// and moments m, v (all of len(g)): m = b1·m + (1−b1)·g, v = b2·v +
// (1−b2)·g², w −= lr·(m/bc1)/(√(v/bc2) + eps), plus wd·w when decay is set
// (decoupled weight decay, AdamW). bc1 and bc2 are the bias corrections
// 1 − b1^t and 1 − b2^t. Every operation rounds as the scalar Go loop
// written in that order, without fused multiply-adds, in the assembly too.
// Without decay, entries whose gradient and moments are 0 (those outside a
// weight's mask) are skipped: their step would be exactly 0.
func Adam(w, g, m, v []float64, b1, b2, eps, lr, bc1, bc2, wd float64, decay bool) {
	w, m, v = w[:len(g)], m[:len(g)], v[:len(g)]
	n := 0
	if useAsm && len(g) >= 4 {
		n = len(g) &^ 3
		c := [9]float64{b1, 1 - b1, b2, 1 - b2, bc1, lr, bc2, eps, wd}
		d := 0
		if decay {
			d = 1
		}
		adamAsm(&w[0], &g[0], &m[0], &v[0], n, &c, d)
	}
	for j := n; j < len(g); j++ {
		gj := g[j]
		if gj == 0 && !decay && m[j] == 0 && v[j] == 0 {
			continue // the step is 0 and the moments stay 0 (outside a mask)
		}
		mj := b1*m[j] + (1-b1)*gj
		vj := b2*v[j] + (1-b2)*gj*gj
		m[j], v[j] = mj, vj
		step := lr * (mj / bc1) / (math.Sqrt(vj/bc2) + eps)
		if decay {
			step += wd * w[j]
		}
		w[j] -= step
	}
}
