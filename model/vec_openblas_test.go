//go:build openblas && cgo

package model

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The C loops of the openblas build against the Go loops of loops.go
// (the default build's code). All but the exponential ones must agree bit
// for bit: vec_openblas.c is compiled without FMA contraction, so each
// element is rounded by the same IEEE 754 operations in the same order
// (this holds with Go's default GOAMD64=v1, under which Go does not fuse
// either).

// specials are inputs every exact kernel is also tried on.
var specials = []float64{0, math.Copysign(0, -1), 1, -1, 1e-310, -1e-310, 3.5e38, -3.5e38, 1e300, math.Inf(1), math.Inf(-1), math.NaN()}

// randVec returns n values: mostly normal draws of scale 3, with the
// specials mixed in and a run of zeros.
func randVec(rng *rand.Rand, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = 3 * rng.NormFloat64()
		if rng.IntN(8) == 0 {
			v[i] = specials[rng.IntN(len(specials))]
		}
	}
	for i := n / 3; i < n/3+min(n/5, 9); i++ {
		v[i] = 0
	}
	return v
}

func randVec32(rng *rand.Rand, n int) []float32 {
	v := randVec(rng, n)
	w := make([]float32, n)
	for i, x := range v {
		w[i] = float32(x)
	}
	return w
}

// same says a and b are the same float64 (bit for bit, or both NaN).
func same(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
}

func sameAll(t *testing.T, what string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	for i := range got {
		if !same(got[i], want[i]) {
			t.Fatalf("%s[%d] = %v (%#x), Go loop gives %v (%#x)", what, i, got[i], math.Float64bits(got[i]), want[i], math.Float64bits(want[i]))
		}
	}
}

func sameAll32(t *testing.T, what string, got, want []float32) {
	t.Helper()
	for i := range got {
		g, w := got[i], want[i]
		if math.Float32bits(g) != math.Float32bits(w) && !(g != g && w != w) {
			t.Fatalf("%s[%d] = %v, Go loop gives %v", what, i, g, w)
		}
	}
}

func TestVecExactKernels(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	for _, shape := range []struct{ rows, w int }{{1, 1}, {3, 7}, {5, 64}, {17, 100}} {
		rows, w := shape.rows, shape.w
		n := rows * w
		src, b, hd := randVec(rng, n), randVec(rng, w), randVec(rng, n)
		s32 := randVec32(rng, n)

		got32, want32 := make([]float32, n), make([]float32, n)
		vTo32(got32, src)
		to32Go(want32, src)
		sameAll32(t, "to32", got32, want32)

		for _, acc := range []bool{false, true} {
			got, want := append([]float64(nil), hd...), append([]float64(nil), hd...)
			vTo64(got, s32, acc)
			to64Go(want, s32, acc)
			sameAll(t, "to64", got, want)
		}

		vBiasAct32(got32, src, nil, b, rows, w, actRelu)
		biasAct32Go(want32, src, nil, b, rows, w, actRelu)
		sameAll32(t, "biasAct32 relu (float64 input)", got32, want32)
		vBiasAct32(got32, nil, s32, b, rows, w, actRelu)
		biasAct32Go(want32, nil, s32, b, rows, w, actRelu)
		sameAll32(t, "biasAct32 relu (float32 input)", got32, want32)

		for _, dx := range [][]float64{nil, hd} {
			got, want := make([]float64, n), make([]float64, n)
			vLogits32(got, dx, s32, b, rows, w)
			logits32Go(want, dx, s32, b, rows, w)
			sameAll(t, "logits32", got, want)
		}

		for _, with32 := range []bool{false, true} {
			got, want := make([]float64, n), make([]float64, n)
			var g32, w32 []float32
			if with32 {
				g32, w32 = make([]float32, n), make([]float32, n)
			}
			vFusedAct(got, g32, s32, hd, b, rows, w, actRelu)
			fusedActGo(want, w32, s32, hd, b, rows, w, actRelu)
			sameAll(t, "fusedRelu", got, want)
			sameAll32(t, "fusedRelu float32 copy", g32, w32)
			vFusedAct(got, g32, s32, hd, b, rows, w, actNone)
			fusedActGo(want, w32, s32, hd, b, rows, w, actNone)
			sameAll(t, "fused, no activation", got, want)
			sameAll32(t, "fused, no activation, float32 copy", g32, w32)

			// FiLM: o = act(p + p⊙s) and its gradients (p = src,
			// s = hd, the output gradient d = b's rows repeated).
			d := make([]float64, n)
			for i := range d {
				d[i] = b[i%w]
			}
			for _, relu := range []bool{false, true} {
				vFilmFwd(got, g32, src, hd, relu)
				filmFwdGo(want, w32, src, hd, relu)
				sameAll(t, "filmFwd", got, want)
				sameAll32(t, "filmFwd float32 copy", g32, w32)
				o := append([]float64(nil), want...)
				gs, ws := make([]float64, n), make([]float64, n)
				vFilmBwd(got, gs, g32, d, hd, o, src, relu)
				filmBwdGo(want, ws, w32, d, hd, o, src, relu)
				sameAll(t, "filmBwd dp", got, want)
				sameAll(t, "filmBwd ds", gs, ws)
				sameAll32(t, "filmBwd float32 copy", g32, w32)
			}

			// ReLU outputs as the forward pass writes them (+0 where off).
			o := make([]float64, n)
			for i := range o {
				o[i] = max(src[i], 0)
			}
			vReluGrad(got, g32, hd, o)
			reluGradGo(want, w32, hd, o)
			sameAll(t, "reluGrad", got, want)
			sameAll32(t, "reluGrad float32 copy", g32, w32)
		}

		states := make([]uint8, n)
		for i := range states {
			states[i] = uint8(rng.IntN(3)) // 2 is not a q = 2 state, but must not read as 1
		}
		for _, flip := range []bool{false, true} {
			vStates32(got32, states, flip)
			states32Go(want32, states, flip)
			sameAll32(t, "states32", got32, want32)
		}

		got, want := append([]float64(nil), b...), append([]float64(nil), b...)
		vColSum(got, src, rows, w)
		colSumGo(want, src, rows, w)
		sameAll(t, "colSum", got, want)
	}
}

func TestVecMaskedKernels(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 1))
	// A MADE-like mask: lower triangular in blocks, so that column blocks
	// have rows both fully on and partly on.
	const in, out = 70, 130
	mask := make([]float64, in*out)
	for j := 0; j < in; j++ {
		for k := 0; k < out; k++ {
			if k*in >= j*out/2 {
				mask[j*out+k] = 1
			}
		}
	}
	tl := newTilingSize(mask, in, out, 32)
	w := randVec(rng, in*out)
	g0, g1 := randVec32(rng, in*out), randVec32(rng, in*out)
	got, want := make([]float32, in*out), make([]float32, in*out)
	for _, c := range tl.cols {
		vMasked32(got, w, mask, c, out)
		masked32Go(want, w, mask, c, out)
	}
	sameAll32(t, "masked32", got, want)
	for _, two := range []bool{false, true} {
		var h []float32
		if two {
			h = g1
		}
		d, e := make([]float64, in*out), make([]float64, in*out)
		for _, c := range tl.cols {
			j0 := c.lo + (c.hi-c.lo)/3
			vCombine32(d, g0, h, 0.3, 0.7, mask, c, out, j0, c.hi)
			combine32Go(e, g0, h, 0.3, 0.7, mask, c, out, j0, c.hi)
		}
		sameAll(t, "combine32", d, e)
	}
}

// TestVecExp checks the C kernel's exponential (Cephes's range reduction
// and rational approximation) against math.Exp on x ≤ 0. Tolerance: 2
// units in the last place, relative (Cephes documents a peak relative
// error of about 2.2e-16 for its double exp on ±708; Go's math.Exp is
// within 1 ulp); below −708 the kernel returns 0, an absolute error below
// e^−708 ≈ 3.3e-308.
func TestVecExp(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	var xs []float64
	for range 200000 {
		xs = append(xs, -708*rng.Float64())
	}
	for range 20000 {
		xs = append(xs, -rng.Float64()*1e-3, -math.Ldexp(rng.Float64(), -rng.IntN(60)))
	}
	xs = append(xs, 0, math.Copysign(0, -1), -math.Ln2/2, -math.Ln2, -1, -708, -708.0001, -745, -1e5, math.Inf(-1), -5e-324)
	got := make([]float64, len(xs))
	expNeg(got, xs)
	worst := 0.0
	for i, x := range xs {
		want := math.Exp(x)
		if x < -708 {
			if got[i] < 0 || got[i] > 3.4e-308 {
				t.Fatalf("exp(%v) = %v, want 0 ≤ · ≤ 3.4e-308 (math.Exp: %v)", x, got[i], want)
			}
			continue
		}
		rel := math.Abs(got[i]-want) / want
		worst = max(worst, rel)
		if rel > 2*0x1p-52 {
			t.Fatalf("exp(%v) = %v, math.Exp gives %v: relative error %.3g above 2 ulp", x, got[i], want, rel)
		}
	}
	t.Logf("largest relative error against math.Exp on %d points: %.3g (%.2f ulp)", len(xs), worst, worst/0x1p-52)
	nan := []float64{math.NaN()}
	expNeg(nan, nan)
	if !math.IsNaN(nan[0]) {
		t.Fatalf("exp(NaN) = %v, want NaN", nan[0])
	}
}

// bernTol bounds the difference of two float64 evaluations of the same
// per-row sum of n terms in different orders, each with per-term errors of
// a few ulp: each differs from the exact sum by at most about
// n·u·Σ|terms| (u = 2^−53; Higham, Accuracy and Stability of Numerical
// Algorithms, SIAM 2002, §4.2), so their difference by twice that.
func bernTol(z []float64) float64 {
	s := 0.0
	for _, v := range z {
		s += math.Abs(v) + math.Log(1+math.Exp(-math.Abs(v)))
	}
	return 2 * float64(len(z)+4) * 0x1p-53 * s
}

// TestVecBernoulli compares the q = 2 log-likelihood kernels (training
// forward and gradient, scoring) with the Go loops: the sums within
// bernTol, the gradient bit for bit given the same e^−|z|.
func TestVecBernoulli(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 2))
	for _, n := range []int{1, 7, 256, 600, 1100} {
		rows := 5
		z := make([]float64, rows*n)
		x := make([]float64, rows*n)
		xs := make([]uint8, rows*n)
		for i := range z {
			z[i] = 4 * rng.NormFloat64()
			if rng.IntN(50) == 0 {
				z[i] = 800 * rng.NormFloat64() // exp underflows
			}
			xs[i] = uint8(rng.IntN(2))
			x[i] = float64(xs[i])
		}
		lp, lpGo := make([]float64, rows), make([]float64, rows)
		e, eGo := make([]float64, rows*n), make([]float64, rows*n)
		vBernFwd(lp, e, x, z, rows, n, make([]float64, n))
		bernFwdGo(lpGo, eGo, x, z, rows, n, nil)
		for i := range lp {
			if tol := bernTol(z[i*n : (i+1)*n]); math.Abs(lp[i]-lpGo[i]) > tol {
				t.Fatalf("n=%d row %d: log p %v, Go loop %v (difference %.3g above %.3g)", n, i, lp[i], lpGo[i], math.Abs(lp[i]-lpGo[i]), tol)
			}
		}
		for i := range e {
			if d := math.Abs(e[i] - eGo[i]); d > 2*0x1p-52*eGo[i] && d > 3.4e-308 {
				t.Fatalf("n=%d: e^−|z| of %v is %v, Go loop %v", n, z[i], e[i], eGo[i])
			}
		}
		g := randVec(rng, rows)
		dz, dzGo := make([]float64, rows*n), make([]float64, rows*n)
		vBernBwd(dz, x, z, eGo, g, rows, n)
		bernBwdGo(dzGo, x, z, eGo, g, rows, n)
		sameAll(t, "bernoulli gradient", dz, dzGo)

		// Scoring: logits with a row stride above n, both spin senses.
		zs := n + 3
		zw := make([]float64, rows*zs)
		for i := 0; i < rows; i++ {
			copy(zw[i*zs:], z[i*n:(i+1)*n])
		}
		for _, flip := range []bool{false, true} {
			got, want := make([]float64, rows), make([]float64, rows)
			vRowLP2(got, zw, zs, xs, n, rows, flip, make([]float64, 2*n))
			rowLP2Go(want, zw, zs, xs, n, rows, flip, nil)
			for i := range got {
				if tol := bernTol(z[i*n : (i+1)*n]); math.Abs(got[i]-want[i]) > tol {
					t.Fatalf("n=%d flip=%v row %d: log p %v, Go loop %v (difference %.3g above %.3g)", n, flip, i, got[i], want[i], math.Abs(got[i]-want[i]), tol)
				}
			}
			if !flip {
				for i := range got {
					if math.Abs(got[i]-lpGo[i]) > bernTol(z[i*n:(i+1)*n]) {
						t.Fatalf("n=%d row %d: scoring %v and training %v kernels disagree", n, i, got[i], lpGo[i])
					}
				}
			}
		}
	}
}

// TestVecLengthChecks: a short slice panics in the wrapper rather than
// being read past its end by C.
func TestVecLengthChecks(t *testing.T) {
	short, long := make([]float64, 3), make([]float64, 4)
	tests := []struct {
		name string
		call func()
	}{
		{"vTo32", func() { vTo32(make([]float32, 3), long) }},
		{"vFilmFwd", func() { vFilmFwd(long, nil, long, short, true) }},
		{"vFilmBwd relu", func() { vFilmBwd(long, long, nil, long, long, short, long, true) }},
		{"vFilmBwd float32", func() { vFilmBwd(long, long, make([]float32, 3), long, long, nil, long, false) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Fatalf("%s with a short slice did not panic", tc.name)
				}
			}()
			tc.call()
		})
	}
}

// BenchmarkVecRowLP2 times the q = 2 scoring sums of 64 rows of 256 sites,
// C kernel against the Go loop.
func BenchmarkVecRowLP2(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	const rows, n = 64, 256
	z := make([]float64, rows*n)
	xs := make([]uint8, rows*n)
	for i := range z {
		z[i], xs[i] = 3*rng.NormFloat64(), uint8(rng.IntN(2))
	}
	dst, scratch := make([]float64, rows), make([]float64, 2*n)
	b.Run("c", func(b *testing.B) {
		for b.Loop() {
			vRowLP2(dst, z, n, xs, n, rows, false, scratch)
		}
		b.ReportMetric(float64(b.N*rows*n)/b.Elapsed().Seconds()/1e6, "Msites/s")
	})
	b.Run("go", func(b *testing.B) {
		for b.Loop() {
			rowLP2Go(dst, z, n, xs, n, rows, false, scratch)
		}
		b.ReportMetric(float64(b.N*rows*n)/b.Elapsed().Seconds()/1e6, "Msites/s")
	})
}

// softplusTol is the tolerance of the C kernels' softplus against Go's:
// both are max(v, 0) + log(1 + e^−|v|) with log(1+e) ∈ [0, ln 2]; the
// C exponential is within 2 ulp of math.Exp (TestVecExp) and Cephes's log
// documents a peak relative error of about 1.1e-16 on its range, as
// math.Log's is below 1 ulp, so the two differ by a few units of 2^−53 in
// log(1+e) and in the final addition: 8u·(|softplus| + 1).
func softplusTol(sp float64) float64 { return 8 * 0x1p-53 * (math.Abs(sp) + 1) }

// TestVecSoftplus checks the C softplus against Go's softplus (the pure-Go
// build's activation), the C e^−o − 1 against math.Expm1 (4 ulp relative,
// the series below ¼ and the cancellation factor 4.5 of e^−o − 1 above),
// and the softplus kernels of the activation passes and the gradient
// against their Go loops within those tolerances (the gradient within 10u:
// the 8u of e^−o − 1 and the rounding of the product).
func TestVecSoftplus(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 3))
	var v []float64
	for range 100000 {
		v = append(v, 40*rng.NormFloat64(), rng.NormFloat64(), 1e-3*rng.NormFloat64())
	}
	v = append(v, 0, math.Copysign(0, -1), 750, -750, 37, -37, math.Inf(1), math.Inf(-1), 1e-300, -1e-300)
	got := make([]float64, len(v))
	softplusC(got, v)
	worst := 0.0
	for i, x := range v {
		want := softplus(x)
		d := math.Abs(got[i] - want)
		if !(d <= softplusTol(want)) && !(math.IsInf(want, 1) && math.IsInf(got[i], 1)) {
			t.Fatalf("softplus(%v) = %v, Go gives %v (difference %.3g)", x, got[i], want, d)
		}
		if !math.IsInf(want, 0) {
			worst = max(worst, d/(math.Abs(want)+1))
		}
	}
	t.Logf("softplus: largest |C − Go|/(|softplus|+1) on %d points: %.3g", len(v), worst)
	nan := []float64{math.NaN()}
	softplusC(nan, nan)
	if !math.IsNaN(nan[0]) {
		t.Fatalf("softplus(NaN) = %v, want NaN", nan[0])
	}

	o := make([]float64, 0, 100000)
	for range 50000 {
		o = append(o, math.Abs(3*rng.NormFloat64()), math.Abs(0.3*rng.NormFloat64()))
	}
	o = append(o, 0, 0.25, math.Nextafter(0.25, 0), 1e-300, 800)
	e := make([]float64, len(o))
	expm1NegC(e, o)
	for i, x := range o {
		want := math.Expm1(-x)
		if d := math.Abs(e[i] - want); d > 4*0x1p-52*math.Abs(want) {
			t.Fatalf("e^−%v − 1 = %v, math.Expm1 gives %v (%.3g ulp)", x, e[i], want, d/(0x1p-52*math.Abs(want)))
		}
	}

	for _, shape := range []struct{ rows, w int }{{1, 3}, {5, 64}, {9, 100}} {
		rows, w := shape.rows, shape.w
		n := rows * w
		src, b, hd := randVec(rng, n), randVec(rng, w), randVec(rng, n)
		s32 := randVec32(rng, n)
		for _, in64 := range []bool{true, false} {
			got32, want32 := make([]float32, n), make([]float32, n)
			s64 := src
			if !in64 {
				s64 = nil
			}
			vBiasAct32(got32, s64, s32, b, rows, w, actSoftplus)
			biasAct32Go(want32, s64, s32, b, rows, w, actSoftplus)
			for i := range got32 {
				// Both round a float64 softplus to float32: they may
				// differ by one float32 ulp where the float64 values
				// straddle a rounding boundary.
				g, wv := float64(got32[i]), float64(want32[i])
				if d := math.Abs(g - wv); !(d <= 0x1p-23*math.Abs(wv)+softplusTol(wv)) && !(math.IsNaN(g) && math.IsNaN(wv)) && g != wv {
					t.Fatalf("biasAct32 softplus[%d] = %v, Go loop %v", i, g, wv)
				}
			}
		}
		for _, bias := range [][]float64{nil, b} {
			for _, act := range []int{actRelu, actSoftplus} {
				got, want := append([]float64(nil), src...), append([]float64(nil), src...)
				vAct64(got, bias, rows, w, act)
				act64Go(want, bias, rows, w, act)
				for i := range got {
					tol := 0.0 // ReLU: the same bits
					if act == actSoftplus {
						tol = softplusTol(want[i])
					}
					if d := math.Abs(got[i] - want[i]); !(d <= tol) && !same(got[i], want[i]) && !(math.IsInf(got[i], 1) && math.IsInf(want[i], 1)) {
						t.Fatalf("act64 (act %d)[%d] = %v, Go loop %v", act, i, got[i], want[i])
					}
					if act == actRelu && !same(got[i], want[i]) {
						t.Fatalf("act64 relu[%d] = %v, Go loop %v", i, got[i], want[i])
					}
				}
			}
		}
		res, want := make([]float64, n), make([]float64, n)
		r32, w32 := make([]float32, n), make([]float32, n)
		vFusedAct(res, r32, s32, hd, b, rows, w, actSoftplus)
		fusedActGo(want, w32, s32, hd, b, rows, w, actSoftplus)
		for i := range res {
			if d := math.Abs(res[i] - want[i]); !(d <= softplusTol(want[i])) && !(math.IsNaN(res[i]) && math.IsNaN(want[i])) && res[i] != want[i] {
				t.Fatalf("fusedAct softplus[%d] = %v, Go loop %v", i, res[i], want[i])
			}
			if float64(r32[i]) != float64(float32(res[i])) && !math.IsNaN(res[i]) {
				t.Fatalf("fusedAct softplus float32 copy[%d] = %v, want float32(%v)", i, r32[i], res[i])
			}
		}
		// The gradient from softplus outputs (≥ 0).
		out := make([]float64, n)
		for i := range out {
			out[i] = softplus(2 * rng.NormFloat64())
		}
		a := randVec(rng, n)
		vSoftplusGrad(res, a, out)
		softplusGradGo(want, a, out)
		for i := range res {
			if d := math.Abs(res[i] - want[i]); !(d <= 10*0x1p-53*math.Abs(want[i])) && !(math.IsNaN(res[i]) && math.IsNaN(want[i])) && res[i] != want[i] {
				t.Fatalf("softplus gradient[%d] = %v, Go loop %v (a = %v, O = %v)", i, res[i], want[i], a[i], out[i])
			}
		}
	}
}
