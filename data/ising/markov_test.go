package ising

import (
	"context"
	"math"
	"testing"
)

// sampleStats returns the mean of f over the snapshots of point k and its
// standard error sqrt(Var/n · max(1, 2τ/spacing)) with the τ measured in
// burn-in (in sweeps) and the spacing of the kept samples.
func sampleStats(res *Result, l Lattice, per, k int, tau float64, f func(x []uint8) float64) (mean, se float64) {
	n := l.N()
	vals := make([]float64, per)
	for j := range vals {
		vals[j] = f(res.States[(k*per+j)*n : (k*per+j+1)*n])
		mean += vals[j]
	}
	mean /= float64(per)
	v := 0.0
	for _, x := range vals {
		v += (x - mean) * (x - mean)
	}
	v /= float64(per - 1)
	factor := math.Max(1, 2*tau/float64(res.Points[k].SpacingSweeps))
	return mean, math.Sqrt(v / float64(per) * factor)
}

func absMPerSite(x []uint8) float64 {
	up := 0
	for _, v := range x {
		up += int(v)
	}
	return math.Abs(float64(2*up-len(x))) / float64(len(x))
}

// TestMonteCarloAgainstExact compares Monte Carlo means with exact values:
// Kaufman's energy (Kaufman 1949) for every lattice and, on lattices small
// enough to enumerate, ⟨E⟩/N and ⟨|m|⟩ from enumeration. Points lie below,
// near and above Onsager's T_c ≈ 2.269 (Onsager 1944).
func TestMonteCarloAgainstExact(t *testing.T) {
	cases := []struct {
		name    string
		l       Lattice
		fixed   Couplings
		axes    []string
		points  [][]float64
		samples int
	}{
		{"4x4 wolff", Lattice{4, 4}, Couplings{Jx: 1, Jy: 1}, []string{"T"}, [][]float64{{1.8}, {2.269}, {3.0}}, 20000},
		{"4x4 metropolis h", Lattice{4, 4}, Couplings{Jx: 1, Jy: 1}, []string{"T", "h"}, [][]float64{{2.0, 0.5}, {2.5, 0.3}, {3.0, -0.5}}, 20000},
		{"3x5 anisotropic", Lattice{3, 5}, Couplings{T: 2.0}, []string{"Jx", "Jy"}, [][]float64{{1.0, 0.5}, {0.4, 1.3}}, 20000},
		{"4x4 antiferro", Lattice{4, 4}, Couplings{Jy: 1, T: 2.0}, []string{"Jx", "h"}, [][]float64{{-1, 0}, {-1, 0.2}}, 20000},
		{"3x3 frustrated", Lattice{3, 3}, Couplings{Jy: -1, T: 1.5}, []string{"Jx"}, [][]float64{{-1}}, 20000},
		{"8x8 wolff", Lattice{8, 8}, Couplings{Jx: 1, Jy: 1}, []string{"T"}, [][]float64{{1.8}, {2.3}, {3.0}}, 8000},
		{"16x16 wolff", Lattice{16, 16}, Couplings{Jx: 1, Jy: 1}, []string{"T"}, [][]float64{{1.8}, {2.3}, {3.0}}, 4000},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			res, err := Simulate(context.Background(), Config{Lattice: tc.l, Fixed: tc.fixed, Axes: tc.axes, Points: tc.points, Samples: tc.samples, Seed: 11, Threads: 2})
			if err != nil {
				t.Fatal(err)
			}
			var exact *Enumeration
			if tc.l.N() <= MaxEnumeratedSites {
				exact, _ = NewEnumeration(tc.l)
			}
			nsite := float64(tc.l.N())
			for k, p := range tc.points {
				c, _ := withParams(tc.fixed, tc.axes, p)
				info := res.Points[k]
				eMC, eSE := sampleStats(res, tc.l, tc.samples, k, info.TauEnergy, func(x []uint8) float64 { return tc.l.Energy(x, c) / nsite })
				mMC, mSE := sampleStats(res, tc.l, tc.samples, k, info.TauAbsM, absMPerSite)
				var eRef, mRef float64
				hasM := false
				if exact != nil {
					mE, _, mA := exact.Moments(c)
					eRef, mRef, hasM = mE/nsite, mA/nsite, true
				}
				if c.H == 0 {
					if kf := KaufmanEnergy(tc.l.Ly, tc.l.Lx, c.T, c.Jx, c.Jy); !math.IsNaN(kf) {
						if exact != nil && math.Abs(kf-eRef) > 1e-10 {
							t.Errorf("%v: Kaufman %v and enumeration %v disagree", p, kf, eRef)
						}
						eRef = kf
					}
				}
				t.Logf("%v (%s, τE=%.2f τ|m|=%.2f spacing %d burn-in %d): E/N = %.5f ± %.5f (exact %.5f), |m| = %.5f ± %.5f (exact %.5f, %v)",
					p, info.Method, info.TauEnergy, info.TauAbsM, info.SpacingSweeps, info.BurnIn, eMC, eSE, eRef, mMC, mSE, mRef, hasM)
				if exact == nil && c.H != 0 {
					continue
				}
				if math.Abs(eMC-eRef) > 4*eSE {
					t.Errorf("%v: E/N = %.5f ± %.5f, exact %.5f (%.1fσ)", p, eMC, eSE, eRef, (eMC-eRef)/eSE)
				}
				if hasM && math.Abs(mMC-mRef) > 4*mSE {
					t.Errorf("%v: ⟨|m|⟩ = %.5f ± %.5f, exact %.5f (%.1fσ)", p, mMC, mSE, mRef, (mMC-mRef)/mSE)
				}
			}
		})
	}
}

func TestSimulateIndependentOfThreads(t *testing.T) {
	cfg := Config{Lattice: Lattice{6, 6}, Fixed: Couplings{Jx: 1, Jy: 1}, Axes: []string{"T"}, Points: [][]float64{{2}, {2.5}, {3}}, Samples: 20, Seed: 5, Threads: 1}
	a, err := Simulate(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	cfg.Threads = 3
	b, _ := Simulate(context.Background(), cfg)
	for i := range a.States {
		if a.States[i] != b.States[i] {
			t.Fatalf("states differ at %d between 1 and 3 threads", i)
		}
	}
	// A point's stream depends on its index only: running it alone gives
	// the same samples.
	cfg.Points = cfg.Points[:1]
	c, _ := Simulate(context.Background(), cfg)
	for i := range c.States {
		if a.States[i] != c.States[i] {
			t.Fatalf("point 0 differs when run alone, at %d", i)
		}
	}
}

func TestIntegratedTimeAR1(t *testing.T) {
	// For an AR(1) series x_t = a x_{t−1} + noise, ρ(t) = a^t and
	// τ_int = ½(1+a)/(1−a) (common practice).
	for _, a := range []float64{0, 0.5, 0.9} {
		ch, _ := NewMarkovChain(Lattice{2, 2}, Couplings{T: 1, Jx: 1, Jy: 1}, 3, uint64(a*10))
		x := make([]float64, 200000)
		for i := 1; i < len(x); i++ {
			// Gaussian noise from the chain's own generator (Box–Muller).
			u1 := (float64(ch.rng.Uint64()>>11) + 0.5) / (1 << 53)
			u2 := float64(ch.rng.Uint64()>>11) / (1 << 53)
			x[i] = a*x[i-1] + math.Sqrt(-2*math.Log(u1))*math.Cos(2*math.Pi*u2)
		}
		tau, _, ok := IntegratedTime(x)
		want := 0.5 * (1 + a) / (1 - a)
		if !ok || math.Abs(tau-want) > 0.05*want+0.02 {
			t.Errorf("a=%v: τ = %v (ok %v), want %v", a, tau, ok, want)
		}
	}
}

func TestSimulateRejectsBadPoints(t *testing.T) {
	base := Config{Lattice: Lattice{4, 4}, Fixed: Couplings{Jx: 1, Jy: 1}, Axes: []string{"T"}, Points: [][]float64{{2}, {0}}, Samples: 5}
	cases := []struct {
		name string
		edit func(c *Config)
	}{
		{"zero temperature", func(c *Config) {}},
		{"unknown axis", func(c *Config) { c.Axes = []string{"beta"}; c.Points = [][]float64{{1}, {2}} }},
		{"small lattice", func(c *Config) { c.Lattice = Lattice{1, 4}; c.Points = [][]float64{{1}, {2}} }},
		{"exact too big", func(c *Config) { c.Lattice = Lattice{5, 5}; c.Enumerated = true; c.Points = [][]float64{{1}, {2}} }},
		{"no samples", func(c *Config) { c.Samples = 0; c.Points = [][]float64{{1}, {2}} }},
	}
	for _, tc := range cases {
		cfg := base
		tc.edit(&cfg)
		if _, err := Simulate(context.Background(), cfg); err == nil {
			t.Errorf("%s: accepted", tc.name)
		}
	}
}
