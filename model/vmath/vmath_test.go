package vmath

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// softplusRef is the straightforward formula log1p(exp(x)), written as
// x + log1p(exp(−x)) for x > 0 so that it does not overflow (common
// practice), with Go's math.Log1p and math.Exp (each within 1 ulp).
func softplusRef(x float64) float64 {
	if x > 0 {
		return x + math.Log1p(math.Exp(-x))
	}
	return math.Log1p(math.Exp(x))
}

// ulps is |a−b| in units of the last place of b.
func ulps(a, b float64) float64 {
	if a == b {
		return 0
	}
	u := math.Nextafter(math.Abs(b), math.Inf(1)) - math.Abs(b)
	return math.Abs(a-b) / u
}

// inputs are edge cases and random values, normal around 0 and uniform
// over ±745.
func inputs() []float64 {
	xs := []float64{0, math.Copysign(0, -1), 1e-300, -1e-300, 1e-17, -1e-17, 0.3465735902799726, -0.3465735902799726,
		0.8813735870195430, -0.8813735870195430, 1, -1, 16, -16, 36.7, -36.7, 700, -700, 707.9, -707.9, 708, -708}
	rng := rand.New(rand.NewPCG(3, 4))
	for range 100000 {
		xs = append(xs, rng.NormFloat64()*4, (rng.Float64()*2-1)*745)
	}
	return xs
}

func TestSoftplus(t *testing.T) {
	xs := inputs()
	for _, n := range []int{len(xs), 7, 3} { // vector body and Go tail
		got := make([]float64, n)
		Softplus(got, xs[:n])
		worst := 0.0
		for i, x := range xs[:n] {
			if s1 := softplus1(x); math.Float64bits(s1) != math.Float64bits(got[i]) {
				t.Fatalf("Softplus(%v) = %v, the Go formula %v: the assembly and Go differ", x, got[i], s1)
			}
			if x < -MaxArg {
				// The exact value is below 3.3e-308; ours is e^−708.
				if !(got[i] > 0 && got[i] < 3.4e-308) {
					t.Fatalf("Softplus(%v) = %v, expected within (0, 3.4e-308)", x, got[i])
				}
				continue
			}
			d := ulps(got[i], softplusRef(x))
			worst = math.Max(worst, d)
			if d > 4 {
				t.Fatalf("Softplus(%v) = %v, log1p(exp(x)) = %v: %.1f ulp apart, expected ≤ 4", x, got[i], softplusRef(x), d)
			}
		}
		t.Logf("n = %d: largest difference from log1p(exp(x)) %.2f ulp", n, worst)
	}
	special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 1, 2}
	got := make([]float64, len(special))
	Softplus(got, special)
	if !math.IsNaN(got[0]) || !math.IsInf(got[1], 1) || !(got[2] >= 0 && got[2] < 3.4e-308) {
		t.Errorf("Softplus(NaN, +Inf, −Inf) = %v, expected NaN, +Inf and a value in [0, 3.4e-308)", got[:3])
	}
	// In place.
	v := []float64{-3, -1, 0, 1, 3}
	Softplus(v, v)
	for i, x := range []float64{-3, -1, 0, 1, 3} {
		if ulps(v[i], softplusRef(x)) > 3 {
			t.Errorf("in place: softplus(%v) = %v, expected %v", x, v[i], softplusRef(x))
		}
	}
}

func TestSigmoidMul(t *testing.T) {
	xs := inputs()
	d := make([]float64, len(xs))
	rng := rand.New(rand.NewPCG(5, 6))
	for i := range d {
		d[i] = rng.NormFloat64()
	}
	for _, n := range []int{len(xs), 5} {
		got := make([]float64, n)
		SigmoidMul(got, d, xs)
		worst := 0.0
		for i, x := range xs[:n] {
			if s1 := sigmoid1(x) * d[i]; math.Float64bits(s1) != math.Float64bits(got[i]) {
				t.Fatalf("SigmoidMul at %v = %v, the Go formula %v: the assembly and Go differ", x, got[i], s1)
			}
			if x < -MaxArg {
				continue
			}
			ref := d[i] / (1 + math.Exp(-x))
			dd := ulps(got[i], ref)
			worst = math.Max(worst, dd)
			if dd > 4 {
				t.Fatalf("σ(%v)·%v = %v, d/(1+exp(−x)) = %v: %.1f ulp apart, expected ≤ 4", x, d[i], got[i], ref, dd)
			}
		}
		t.Logf("n = %d: largest difference from d/(1+exp(−x)) %.2f ulp", n, worst)
	}
	nan := make([]float64, 4)
	SigmoidMul(nan, []float64{1, 1, 1, 1}, []float64{math.NaN(), 0, 0, 0})
	if !math.IsNaN(nan[0]) || nan[1] != 0.5 {
		t.Errorf("σ(NaN), σ(0) = %v, %v; expected NaN, 0.5", nan[0], nan[1])
	}
}

func BenchmarkSoftplus(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	a := make([]float64, 4096)
	for i := range a {
		a[i] = rng.NormFloat64() * 3
	}
	o := make([]float64, len(a))
	rate := func(b *testing.B) { b.ReportMetric(float64(b.N*len(a))/b.Elapsed().Seconds(), "values/s") }
	b.Run("vmath", func(b *testing.B) {
		for b.Loop() {
			Softplus(o, a)
		}
		rate(b)
	})
	b.Run("log1p-exp", func(b *testing.B) {
		for b.Loop() {
			for i, v := range a {
				o[i] = softplusRef(v)
			}
		}
		rate(b)
	})
	b.Run("sigmoid-vmath", func(b *testing.B) {
		for b.Loop() {
			SigmoidMul(o, a, a)
		}
		rate(b)
	})
	b.Run("sigmoid-exp", func(b *testing.B) {
		for b.Loop() {
			for i, v := range a {
				o[i] = v / (1 + math.Exp(-v))
			}
		}
		rate(b)
	})
}

// TestAdam checks the vectorised Adam step against the same step taken one
// entry at a time (the Go loop), bit for bit, with and without decay, and
// the moments against their definition (Kingma & Ba, ICLR 2015, Algorithm 1).
func TestAdam(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	const n = 1003
	for _, decay := range []bool{false, true} {
		w, g, m, v := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range w {
			w[i], g[i] = rng.NormFloat64(), rng.NormFloat64()*1e-3
			if i%3 == 0 {
				g[i] = 0
			}
			m[i], v[i] = rng.NormFloat64()*1e-3, rng.Float64()*1e-6
		}
		w1, m1, v1 := slices.Clone(w), slices.Clone(m), slices.Clone(v)
		m0, v0 := slices.Clone(m), slices.Clone(v)
		args := []float64{0.9, 0.999, 1e-8, 2e-3, 1 - math.Pow(0.9, 7), 1 - math.Pow(0.999, 7), 2e-3 * 0.01}
		Adam(w, g, m, v, args[0], args[1], args[2], args[3], args[4], args[5], args[6], decay)
		for i := range w1 {
			Adam(w1[i:i+1], g[i:i+1], m1[i:i+1], v1[i:i+1], args[0], args[1], args[2], args[3], args[4], args[5], args[6], decay)
		}
		for i := range w {
			if math.Float64bits(w[i]) != math.Float64bits(w1[i]) || m[i] != m1[i] || v[i] != v1[i] {
				t.Fatalf("decay %v, entry %d: vectorised w, m, v = %v, %v, %v; one at a time %v, %v, %v", decay, i, w[i], m[i], v[i], w1[i], m1[i], v1[i])
			}
			if wantM := 0.9*m0[i] + 0.1*g[i]; math.Abs(m[i]-wantM) > 1e-15*(math.Abs(m0[i])+math.Abs(g[i]))+1e-300 {
				t.Fatalf("entry %d: m = %v, expected β1·m + (1−β1)·g = %v", i, m[i], wantM)
			}
			if wantV := 0.999*v0[i] + 0.001*g[i]*g[i]; math.Abs(v[i]-wantV) > 1e-14*wantV+1e-300 {
				t.Fatalf("entry %d: v = %v, expected β2·v + (1−β2)·g² = %v", i, v[i], wantV)
			}
		}
	}
}
