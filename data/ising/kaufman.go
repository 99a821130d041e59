package ising

import "math"

// Kaufman's exact partition function of the finite periodic Ly×Lx lattice at
// h = 0 (B. Kaufman, Phys. Rev. 76, 1232 (1949); in the form of A. E.
// Ferdinand and M. E. Fisher, Phys. Rev. 185, 832 (1969), written here from
// memory and checked against enumeration in the tests). With m = Ly rows of
// n = Lx spins, Ka = Jy/T (between rows), Kb = Jx/T (along a row) and the
// dual Ka* = −½ ln tanh Ka,
//
//	Z = ½ (2 sinh 2Ka)^{mn/2} (Z1 + Z2 + Z3 + Z4),
//	Z1 = Π_{l odd} 2cosh(m γ_l/2),  Z2 = Π_{l odd} 2sinh(m γ_l/2),
//	Z3 = Π_{l even} 2cosh(m γ_l/2), Z4 = Π_{l even} 2sinh(m γ_l/2),
//
// over l = 0..2n−1, with cosh γ_l = cosh 2Ka* cosh 2Kb − sinh 2Ka* sinh 2Kb
// cos(πl/n) (γ_l > 0 for l ≥ 1) and γ_0 = 2(Kb − Ka*), which is negative
// above the critical temperature. Everything is kept in the log domain, so
// L = 64 and beyond do not overflow; the energy and heat capacity come from
// the analytic first and second β-derivatives of ln Z, not from numerical
// differences.

// kaufmanDerivs returns ln Z and its first two derivatives with respect to
// β = 1/T, or NaN when the couplings are outside the formula's reach.
func kaufmanDerivs(ly, lx int, T, jx, jy float64) (lnZ, d1, d2 float64) {
	nan := math.NaN()
	if ly < 1 || lx < 1 || !(T > 0) {
		return nan, nan, nan
	}
	// An antiferromagnetic coupling along a side of even length maps onto a
	// ferromagnetic one by flipping every other column (row): same Z.
	if jx < 0 && lx%2 == 0 {
		jx = -jx
	}
	if jy < 0 && ly%2 == 0 {
		jy = -jy
	}
	if !(jx > 0) || !(jy > 0) {
		return nan, nan, nan
	}
	beta := 1 / T
	m, n := float64(ly), float64(lx)
	ka, kb := beta*jy, beta*jx
	// p = coth 2Ka = cosh 2Ka*, q = 1/sinh 2Ka = sinh 2Ka*, and their
	// derivatives with respect to Ka.
	sa := math.Sinh(2 * ka)
	p, q := 1/math.Tanh(2*ka), 1/sa
	p1, q1 := -2*q*q, -2*p*q
	p2, q2 := 8*p*q*q, 4*q*q*q+4*p*p*q
	cb, sb := math.Cosh(2*kb), math.Sinh(2*kb)

	// Each of Z1..Z4 is exp(a)·b with (a, a', a'') and (b, b', b'').
	type term struct{ a, a1, a2, b, b1, b2 float64 }
	terms := [4]term{{b: 1}, {b: 1}, {b: 1}, {b: 1}}
	for l := 0; l < 2*lx; l++ {
		var g, g1, g2 float64 // γ_l and its β-derivatives
		if l == 0 {
			kaStar := -0.5 * math.Log(math.Tanh(ka))
			g = 2 * (kb - kaStar)
			g1 = 2 * (jx + jy*q)      // dKa*/dKa = −q
			g2 = -4 * jy * jy * p * q // d²Ka*/dKa² = 2pq
		} else {
			cos := math.Cos(math.Pi * float64(l) / n)
			c := p*cb - cos*q*sb
			c1 := jy*(p1*cb-cos*q1*sb) + jx*(2*p*sb-2*cos*q*cb)
			c2 := jy*jy*(p2*cb-cos*q2*sb) + 2*jx*jy*(2*p1*sb-2*cos*q1*cb) + jx*jx*(4*p*cb-4*cos*q*sb)
			g = math.Acosh(c)
			sg := math.Sinh(g)
			g1 = c1 / sg
			g2 = (c2 - c*g1*g1) / sg
		}
		u, u1, u2 := m*g/2, m*g1/2, m*g2/2
		odd := l%2 == 1
		ci, si := 2, 3
		if odd {
			ci, si = 0, 1
		}
		// ln 2cosh u = |u| + log1p(e^{−2|u|}).
		t := &terms[ci]
		au := math.Abs(u)
		th := math.Tanh(u)
		t.a += au + math.Log1p(math.Exp(-2*au))
		t.a1 += th * u1
		t.a2 += (1-th*th)*u1*u1 + th*u2
		// 2sinh u: in the log domain when u > 0 (every l ≥ 1); the l = 0
		// factor, which changes sign at T_c, is kept as b.
		t = &terms[si]
		if l == 0 && au < 30 {
			t.b = 2 * math.Sinh(u)
			t.b1 = 2 * math.Cosh(u) * u1
			t.b2 = 2*math.Sinh(u)*u1*u1 + 2*math.Cosh(u)*u2
			continue
		}
		sgn := 1.0
		if u < 0 {
			sgn = -1
			t.b = -t.b
		}
		ct := 1 / math.Tanh(au) // coth|u|
		t.a += au + math.Log1p(-math.Exp(-2*au))
		t.a1 += sgn * ct * u1
		t.a2 += -(ct*ct-1)*u1*u1 + sgn*ct*u2
	}
	amax := math.Inf(-1)
	for _, t := range terms {
		amax = math.Max(amax, t.a)
	}
	var s0, s1, s2 float64
	for _, t := range terms {
		w := math.Exp(t.a - amax)
		s0 += w * t.b
		s1 += w * (t.a1*t.b + t.b1)
		s2 += w * ((t.a2+t.a1*t.a1)*t.b + 2*t.a1*t.b1 + t.b2)
	}
	lnZ = math.Log(0.5) + m*n/2*math.Log(2*sa) + amax + math.Log(s0)
	d1 = m*n*jy*p + s1/s0
	d2 = -2*m*n*jy*jy*q*q + s2/s0 - (s1/s0)*(s1/s0)
	return lnZ, d1, d2
}

// KaufmanLogZ returns ln Z of the periodic ly×lx lattice at h = 0 and
// temperature T with couplings jx (along x) and jy (along y), exactly
// (Kaufman 1949). Both couplings must be positive, or negative along a side
// of even length (which maps onto the ferromagnet); otherwise it returns NaN.
func KaufmanLogZ(ly, lx int, T, jx, jy float64) float64 {
	z, _, _ := kaufmanDerivs(ly, lx, T, jx, jy)
	return z
}

// KaufmanEntropy returns the exact entropy per site at h = 0,
// s = ln Z/N + ⟨H⟩/(N T), from Kaufman's ln Z and its energy; NaN where the
// formula does not apply (see KaufmanLogZ).
func KaufmanEntropy(ly, lx int, T, jx, jy float64) float64 {
	return KaufmanLogZ(ly, lx, T, jx, jy)/float64(ly*lx) + KaufmanEnergy(ly, lx, T, jx, jy)/T
}

// KaufmanEnergy returns the exact mean energy per site ⟨H⟩/N at h = 0, from
// the analytic β-derivative of Kaufman's ln Z: ⟨H⟩ = −∂ln Z/∂β.
func KaufmanEnergy(ly, lx int, T, jx, jy float64) float64 {
	_, d1, _ := kaufmanDerivs(ly, lx, T, jx, jy)
	return -d1 / float64(ly*lx)
}

// KaufmanHeatCapacity returns the exact heat capacity per site C/N =
// β² ∂²ln Z/∂β² / N at h = 0, from the analytic second β-derivative of
// Kaufman's ln Z.
func KaufmanHeatCapacity(ly, lx int, T, jx, jy float64) float64 {
	_, _, d2 := kaufmanDerivs(ly, lx, T, jx, jy)
	return d2 / (T * T * float64(ly*lx))
}

// KaufmanPeak returns the temperature of the maximum of C/N of the periodic
// ly×lx lattice in [lo, hi] and its height, by a scan of 200 points followed
// by golden-section refinement (to about 1e-9 in T).
func KaufmanPeak(ly, lx int, jx, jy, lo, hi float64) (T, c float64) {
	return maximize(func(t float64) float64 { return KaufmanHeatCapacity(ly, lx, t, jx, jy) }, lo, hi)
}

// KaufmanFisherPeak returns the temperature of the maximum of C/(N T²) of
// the periodic ly×lx lattice in [lo, hi] and its height: the Fisher
// information in T per site, F_T/N = Var(E)/(N T⁴) (common practice), which
// is what tidemark's indicators measure. It lies below the heat-capacity
// maximum of KaufmanPeak.
func KaufmanFisherPeak(ly, lx int, jx, jy, lo, hi float64) (T, f float64) {
	return maximize(func(t float64) float64 { return KaufmanHeatCapacity(ly, lx, t, jx, jy) / (t * t) }, lo, hi)
}

// maximize returns the argument and value of the maximum of f on [lo, hi]
// by a scan of 200 points followed by golden-section refinement (to about
// 1e-9 in the argument) around the best one.
func maximize(f func(float64) float64, lo, hi float64) (x, fx float64) {
	const steps = 200
	best, bestT := math.Inf(-1), lo
	for i := 0; i <= steps; i++ {
		t := lo + (hi-lo)*float64(i)/steps
		if v := f(t); v > best {
			best, bestT = v, t
		}
	}
	h := (hi - lo) / steps
	a, b := math.Max(lo, bestT-h), math.Min(hi, bestT+h)
	r := (math.Sqrt(5) - 1) / 2
	x1, x2 := b-r*(b-a), a+r*(b-a)
	f1, f2 := f(x1), f(x2)
	for b-a > 1e-10 {
		if f1 > f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - r*(b-a)
			f1 = f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + r*(b-a)
			f2 = f(x2)
		}
	}
	x = (a + b) / 2
	return x, f(x)
}
