package ising

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mathext"
)

func TestKaufmanAgainstEnumeration(t *testing.T) {
	cases := []struct {
		ly, lx int
		T      float64
		jx, jy float64
	}{
		{4, 4, 2.0, 1, 1}, {4, 4, 2.269185, 1, 1}, {4, 4, 3.0, 1, 1}, {4, 4, 0.7, 1, 1}, {4, 4, 12, 1, 1},
		{4, 6, 2.1, 1, 1}, {3, 5, 2.5, 1, 1}, {3, 5, 1.5, 1, 1}, {5, 3, 1.9, 1, 1},
		{3, 5, 2.0, 0.6, 1.4}, {4, 5, 1.7, 1.3, 0.5}, {2, 3, 1.0, 1, 1}, {4, 4, 2.0, -1, 1}, {2, 6, 3, 2, 0.3},
	}
	for _, tc := range cases {
		l := Lattice{tc.ly, tc.lx}
		e, err := NewEnumeration(l)
		if err != nil {
			t.Fatal(err)
		}
		c := Couplings{T: tc.T, Jx: tc.jx, Jy: tc.jy}
		want := e.LogZ(c)
		got := KaufmanLogZ(tc.ly, tc.lx, tc.T, tc.jx, tc.jy)
		if math.Abs(got-want) > 1e-10 {
			t.Errorf("%d×%d T=%v Jx=%v Jy=%v: Kaufman ln Z = %.14g, enumeration %.14g", tc.ly, tc.lx, tc.T, tc.jx, tc.jy, got, want)
		}
		n := float64(l.N())
		mE, vE, _ := e.Moments(c)
		if got, want := KaufmanEnergy(tc.ly, tc.lx, tc.T, tc.jx, tc.jy), mE/n; math.Abs(got-want) > 1e-10 {
			t.Errorf("%d×%d T=%v: Kaufman E/N = %.14g, enumeration %.14g", tc.ly, tc.lx, tc.T, got, want)
		}
		if got, want := KaufmanHeatCapacity(tc.ly, tc.lx, tc.T, tc.jx, tc.jy), vE/(n*tc.T*tc.T); math.Abs(got-want) > 1e-9 {
			t.Errorf("%d×%d T=%v: Kaufman C/N = %.14g, enumeration %.14g", tc.ly, tc.lx, tc.T, got, want)
		}
	}
}

// onsagerEnergy is the energy per site of the infinite isotropic lattice,
// u = −J coth 2K [1 + (2/π)(2 tanh² 2K − 1) K(κ²)], κ = 2 sinh 2K / cosh² 2K
// (L. Onsager, Phys. Rev. 65, 117 (1944); form from memory), with the
// complete elliptic integral K of gonum's mathext (parameter m = κ²).
func onsagerEnergy(T float64) float64 {
	k := 1 / T
	kappa := 2 * math.Sinh(2*k) / math.Pow(math.Cosh(2*k), 2)
	th := math.Tanh(2 * k)
	return -1 / th * (1 + 2/math.Pi*(2*th*th-1)*mathext.CompleteK(kappa*kappa))
}

func TestKaufmanLargeLatticeMatchesOnsager(t *testing.T) {
	// Away from T_c the finite-size correction is exponentially small in L.
	for _, T := range []float64{1.2, 1.6, 3.2, 4.0} {
		got, want := KaufmanEnergy(64, 64, T, 1, 1), onsagerEnergy(T)
		if math.Abs(got-want) > 1e-9 {
			t.Errorf("T=%v: Kaufman 64×64 E/N = %.12f, Onsager %.12f", T, got, want)
		}
	}
	for _, T := range []float64{0.2, 0.5, 1, 2.269185314, 3, 10, 100} {
		for _, l := range []int{16, 64, 128} {
			z, e, c := KaufmanLogZ(l, l, T, 1, 1), KaufmanEnergy(l, l, T, 1, 1), KaufmanHeatCapacity(l, l, T, 1, 1)
			if math.IsNaN(z) || math.IsInf(z, 0) || math.IsNaN(e) || math.IsNaN(c) || c < -1e-8 || e < -2-1e-12 || e > 0 {
				t.Errorf("L=%d T=%v: ln Z=%v E/N=%v C/N=%v", l, T, z, e, c)
			}
		}
	}
}

// onsagerTc is the critical temperature 2/ln(1+√2) of the isotropic square
// lattice (L. Onsager, Phys. Rev. 65, 117 (1944)).
var onsagerTc = 2 / math.Log(1+math.Sqrt2)

func TestHeatCapacityPeakApproachesOnsager(t *testing.T) {
	sizes := []int{16, 32, 64}
	shift := make([]float64, len(sizes))
	for i, l := range sizes {
		T, c := KaufmanPeak(l, l, 1, 1, 2.0, 2.6)
		shift[i] = T - onsagerTc
		t.Logf("L=%d: C/N peak at T=%.6f (T−Tc=%.6f, L·(T−Tc)=%.4f), height %.4f", l, T, shift[i], float64(l)*shift[i], c)
		if i > 0 && math.Abs(shift[i]) >= math.Abs(shift[i-1]) {
			t.Errorf("peak does not move towards Tc: shifts %v", shift)
		}
	}
	// A shift ∝ 1/L halves when L doubles (finite-size scaling, A. E. Ferdinand
	// and M. E. Fisher, Phys. Rev. 185, 832 (1969)); allow the 1/L² corrections.
	for i := 1; i < len(sizes); i++ {
		r := shift[i-1] / shift[i]
		if r < 1.7 || r > 2.3 {
			t.Errorf("shift ratio L=%d/L=%d is %.3f, want close to 2", sizes[i-1], sizes[i], r)
		}
	}
}

func TestKaufmanOutsideItsReach(t *testing.T) {
	cases := []struct {
		name      string
		ly, lx    int
		T, jx, jy float64
		wantNaN   bool
	}{
		{"antiferro along odd side", 3, 5, 2, -1, 1, true},
		{"antiferro along even side", 3, 4, 2, -1, 1, false},
		{"zero coupling", 4, 4, 2, 0, 1, true},
		{"zero temperature", 4, 4, 0, 1, 1, true},
		{"negative temperature", 4, 4, -1, 1, 1, true},
	}
	for _, tc := range cases {
		if got := math.IsNaN(KaufmanLogZ(tc.ly, tc.lx, tc.T, tc.jx, tc.jy)); got != tc.wantNaN {
			t.Errorf("%s: NaN = %v, want %v", tc.name, got, tc.wantNaN)
		}
	}
}

// TestKaufmanDerivativesLargeLattice checks the analytic energy and heat
// capacity against central differences of ln Z in β on lattices far too large
// to enumerate, where the log-domain branches are used (common practice).
func TestKaufmanDerivativesLargeLattice(t *testing.T) {
	for _, tc := range []struct {
		ly, lx    int
		T, jx, jy float64
	}{{64, 64, 1.5, 1, 1}, {64, 64, 2.269185, 1, 1}, {64, 64, 3.5, 1, 1}, {48, 32, 2.0, 1.2, 0.7}, {33, 65, 0.4, 1, 1}} {
		n := float64(tc.ly * tc.lx)
		lz := func(beta float64) float64 { return KaufmanLogZ(tc.ly, tc.lx, 1/beta, tc.jx, tc.jy) }
		b, h := 1/tc.T, 1e-4
		d1 := (lz(b+h) - lz(b-h)) / (2 * h)
		d2 := (lz(b+h) - 2*lz(b) + lz(b-h)) / (h * h)
		if got, want := KaufmanEnergy(tc.ly, tc.lx, tc.T, tc.jx, tc.jy), -d1/n; math.Abs(got-want) > 1e-6 {
			t.Errorf("%+v: E/N = %.10f, difference of ln Z gives %.10f", tc, got, want)
		}
		if got, want := KaufmanHeatCapacity(tc.ly, tc.lx, tc.T, tc.jx, tc.jy), d2/(tc.T*tc.T*n); math.Abs(got-want) > 1e-3*math.Max(1, want) {
			t.Errorf("%+v: C/N = %.8f, difference of ln Z gives %.8f", tc, got, want)
		}
	}
}

// TestKaufmanFisherPeakMatchesEnumeration checks the maximum of the Fisher
// information in T per site, Var(E)/(N T⁴) (common practice), from
// Kaufman's heat capacity against a fine scan of the same quantity from
// exact enumeration of the 4×4 lattice (the enumeration is checked against
// Beale's density of states, Phys. Rev. Lett. 76, 78 (1996)), and that it
// lies below the heat-capacity maximum.
func TestKaufmanFisherPeakMatchesEnumeration(t *testing.T) {
	e, err := NewEnumeration(Lattice{Ly: 4, Lx: 4})
	if err != nil {
		t.Fatal(err)
	}
	bestT, best := 0.0, math.Inf(-1)
	for T := 1.5; T <= 3.5; T += 1e-4 {
		_, varE, _ := e.Moments(Couplings{T: T, Jx: 1, Jy: 1})
		if v := varE / 16 / (T * T * T * T); v > best {
			bestT, best = T, v
		}
	}
	T, f := KaufmanFisherPeak(4, 4, 1, 1, 1.5, 3.5)
	if math.Abs(T-bestT) > 2e-4 || math.Abs(f-best) > 1e-6*best {
		t.Errorf("KaufmanFisherPeak = T %v, height %v; enumeration %v, %v", T, f, bestT, best)
	}
	if tc, _ := KaufmanPeak(4, 4, 1, 1, 1.5, 3.5); !(T < tc) {
		t.Errorf("Fisher maximum %v not below the heat-capacity maximum %v", T, tc)
	}
}
