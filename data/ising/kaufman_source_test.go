package ising

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestKaufmanSourceMatchesEnumeration compares the Kaufman source's
// log-probabilities (B. Kaufman, Phys. Rev. 76, 1232 (1949)) with those of
// exact enumeration on lattices small enough to enumerate, at random
// snapshots and several couplings.
func TestKaufmanSourceMatchesEnumeration(t *testing.T) {
	for _, tc := range []struct {
		name  string
		lat   Lattice
		names []string
		fixed Couplings
		pts   [][]float64
	}{
		{"4x4 T", Lattice{Ly: 4, Lx: 4}, []string{"T"}, Couplings{Jx: 1, Jy: 1}, [][]float64{{1.2}, {2.269}, {3.5}}},
		{"4x6 T,Jy", Lattice{Ly: 4, Lx: 6}, []string{"T", "Jy"}, Couplings{Jx: 1}, [][]float64{{1.5, 0.5}, {2.5, 1.5}}},
		{"3x5 Jx", Lattice{Ly: 3, Lx: 5}, []string{"Jx"}, Couplings{T: 2, Jy: 0.7}, [][]float64{{0.3}, {1.1}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ks, err := NewKaufmanSource(tc.lat, tc.names, tc.fixed)
			if err != nil {
				t.Fatal(err)
			}
			es, err := NewSource(tc.lat, tc.names, tc.fixed)
			if err != nil {
				t.Fatal(err)
			}
			n, rows := tc.lat.N(), 50
			xs := make([]uint8, rows*n)
			rng := rand.New(rand.NewPCG(3, 4))
			for i := range xs {
				xs[i] = uint8(rng.IntN(2))
			}
			got, want := make([]float64, rows), make([]float64, rows)
			for _, p := range tc.pts {
				if err := ks.LogProb(got, xs, p); err != nil {
					t.Fatal(err)
				}
				if err := es.LogProb(want, xs, p); err != nil {
					t.Fatal(err)
				}
				for m := range got {
					if math.Abs(got[m]-want[m]) > 1e-9*math.Max(1, math.Abs(want[m])) {
						t.Fatalf("λ=%v, snapshot %d: Kaufman %.12g, enumeration %.12g", p, m, got[m], want[m])
					}
				}
			}
		})
	}
}

func TestKaufmanSourceRefusals(t *testing.T) {
	if _, err := NewKaufmanSource(Lattice{Ly: 8, Lx: 8}, []string{"T", "h"}, Couplings{Jx: 1, Jy: 1}); err == nil {
		t.Error("field as a parameter: no error")
	}
	if _, err := NewKaufmanSource(Lattice{Ly: 8, Lx: 8}, []string{"T"}, Couplings{Jx: 1, Jy: 1, H: 0.1}); err == nil {
		t.Error("fixed nonzero field: no error")
	}
	ks, err := NewKaufmanSource(Lattice{Ly: 3, Lx: 3}, []string{"Jx"}, Couplings{T: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	// An antiferromagnetic coupling along a side of odd length frustrates
	// the lattice, where Kaufman's formula does not apply.
	if err := ks.LogProb(make([]float64, 1), make([]uint8, 9), []float64{-1}); err == nil {
		t.Error("Jx = −1 on a side of 3 sites: no error")
	}
}
