//go:build validation

package ising

import (
	"context"
	"math"
	"testing"
)

// runChain burns in ch and returns the mean of E/N over n kept samples and
// its standard error sqrt(Var/n · max(1, 2τ/spacing)).
func runChain(t *testing.T, ch *MarkovChain, n int) (mean, se float64, info PointInfo) {
	info, err := ch.BurnIn(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	vals := make([]float64, n)
	for j := range vals {
		for i := 0; i < info.SpacingSweeps; i++ {
			ch.Sweep()
		}
		vals[j] = ch.Energy() / float64(len(ch.s))
		mean += vals[j]
	}
	mean /= float64(n)
	v := 0.0
	for _, x := range vals {
		v += (x - mean) * (x - mean)
	}
	v /= float64(n - 1)
	return mean, math.Sqrt(v / float64(n) * math.Max(1, 2*info.TauEnergy/float64(info.SpacingSweeps))), info
}

// TestValidationLargeLattices compares Monte Carlo energies on 32×32 and
// 64×64 lattices (Wolff) and on 16×16 (Metropolis at h = 0) with Kaufman's
// exact finite-lattice energy (Kaufman 1949).
func TestValidationLargeLattices(t *testing.T) {
	cases := []struct {
		l          int
		T, jx, jy  float64
		metropolis bool
		n          int
	}{
		{32, 2.0, 1, 1, false, 20000}, {32, 2.269185, 1, 1, false, 20000}, {32, 2.6, 1, 1, false, 20000},
		{64, 2.269185, 1, 1, false, 10000}, {64, 3.0, 1, 1, false, 10000},
		{32, 1.6, 1, 0.5, false, 10000},
		{16, 2.0, 1, 1, true, 20000}, {16, 2.4, 1, 1, true, 20000}, {16, 3.0, 1, 1, true, 20000},
	}
	for i, tc := range cases {
		ch, err := NewMarkovChain(Lattice{tc.l, tc.l}, Couplings{T: tc.T, Jx: tc.jx, Jy: tc.jy}, 99, uint64(i))
		if err != nil {
			t.Fatal(err)
		}
		if tc.metropolis {
			ch.UseMetropolis()
		}
		mean, se, info := runChain(t, ch, tc.n)
		ref := KaufmanEnergy(tc.l, tc.l, tc.T, tc.jx, tc.jy)
		t.Logf("L=%d T=%v Jx=%v Jy=%v %s: E/N = %.5f ± %.5f, Kaufman %.5f (τE=%.2f spacing %d converged %v)", tc.l, tc.T, tc.jx, tc.jy, info.Method, mean, se, ref, info.TauEnergy, info.SpacingSweeps, info.TauConverged)
		if math.Abs(mean-ref) > 4*se {
			t.Errorf("L=%d T=%v: E/N = %.5f ± %.5f, Kaufman %.5f (%.1fσ)", tc.l, tc.T, mean, se, ref, (mean-ref)/se)
		}
	}
}

// TestValidationExactSamples24 draws exact samples of the largest
// enumerable lattice (4×6) and compares their mean energy with Kaufman's.
func TestValidationExactSamples24(t *testing.T) {
	res, err := Simulate(context.Background(), Config{Lattice: Lattice{4, 6}, Fixed: Couplings{Jx: 1, Jy: 1}, Axes: []string{"T"}, Points: [][]float64{{2.0}, {2.5}}, Samples: 20000, Enumerated: true, Seed: 4, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	l := Lattice{4, 6}
	for k, T := range []float64{2.0, 2.5} {
		mean, se := sampleStats(res, l, 20000, k, 0.5, func(x []uint8) float64 { return l.Energy(x, Couplings{T: T, Jx: 1, Jy: 1}) / 24 })
		ref := KaufmanEnergy(4, 6, T, 1, 1)
		if math.Abs(mean-ref) > 4*se {
			t.Errorf("T=%v: exact-sample E/N = %.5f ± %.5f, Kaufman %.5f", T, mean, se, ref)
		}
	}
}
