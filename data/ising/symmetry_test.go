package ising

import (
	"slices"
	"testing"

	"tidemark/data/density"
)

// TestSymmetries checks the declared symmetries against those of the
// nearest-neighbour Ising Hamiltonian on a periodic lattice (common
// practice), and that each declared one leaves the enumerated
// probabilities unchanged.
func TestSymmetries(t *testing.T) {
	all := []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate, density.SymFlip}
	for _, tc := range []struct {
		name  string
		l     Lattice
		axes  []string
		fixed Couplings
		want  []density.Symmetry
	}{
		{"square, T", Lattice{Ly: 3, Lx: 3}, []string{"T"}, Couplings{Jx: 1, Jy: 1}, all},
		{"rectangle", Lattice{Ly: 2, Lx: 3}, []string{"T"}, Couplings{Jx: 1, Jy: 1}, []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymFlip}},
		{"Jx != Jy", Lattice{Ly: 3, Lx: 3}, []string{"T"}, Couplings{Jx: 1, Jy: 0.5}, []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymFlip}},
		{"Jx varies", Lattice{Ly: 3, Lx: 3}, []string{"T", "Jx"}, Couplings{Jx: 1, Jy: 1}, []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymFlip}},
		{"field", Lattice{Ly: 3, Lx: 3}, []string{"T"}, Couplings{Jx: 1, Jy: 1, H: 0.2}, []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate}},
		{"field varies", Lattice{Ly: 3, Lx: 3}, []string{"T", "h"}, Couplings{Jx: 1, Jy: 1}, []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate}},
	} {
		s, err := NewSource(tc.l, tc.axes, tc.fixed)
		if err != nil {
			t.Fatal(err)
		}
		got := s.Symmetries()
		if !slices.Equal(got, tc.want) {
			t.Errorf("%s: %v, want %v", tc.name, got, tc.want)
		}
		// Every declared symmetry maps each state to one of equal
		// probability at a sample point.
		lambda := make([]float64, len(tc.axes))
		for i, a := range tc.axes {
			lambda[i] = map[string]float64{"T": 2.1, "Jx": 0.7, "h": 0.3}[a]
		}
		checkInvariant(t, tc.name, s, got, lambda)
	}
}

// checkInvariant compares log p of every state with that of its image under
// each symmetry (one generator each: shift by one column, mirror of x,
// transpose on a square lattice, value flip).
func checkInvariant(t *testing.T, name string, s *Source, syms []density.Symmetry, lambda []float64) {
	t.Helper()
	l := s.Enumeration().lat
	n := l.N()
	M := 1 << n
	xs := make([]uint8, M*n)
	for m := 0; m < M; m++ {
		for j := 0; j < n; j++ {
			xs[m*n+j] = uint8(m >> j & 1)
		}
	}
	lp := make([]float64, M)
	if err := s.LogProb(lp, xs, lambda); err != nil {
		t.Fatal(err)
	}
	ys := make([]uint8, M*n)
	lq := make([]float64, M)
	for _, sym := range syms {
		for m := 0; m < M; m++ {
			x, y := xs[m*n:(m+1)*n], ys[m*n:(m+1)*n]
			for r := 0; r < l.Ly; r++ {
				for c := 0; c < l.Lx; c++ {
					v := x[r*l.Lx+c]
					switch sym {
					case density.SymTranslate:
						y[r*l.Lx+(c+1)%l.Lx] = v
					case density.SymMirror:
						y[r*l.Lx+l.Lx-1-c] = v
					case density.SymRotate:
						y[c*l.Lx+r] = v
					case density.SymFlip:
						y[r*l.Lx+c] = 1 - v
					}
				}
			}
		}
		if err := s.LogProb(lq, ys, lambda); err != nil {
			t.Fatal(err)
		}
		for m := range lp {
			if d := lp[m] - lq[m]; d > 1e-9 || d < -1e-9 {
				t.Errorf("%s: %s changes log p of state %d from %v to %v", name, sym, m, lp[m], lq[m])
				break
			}
		}
	}
}
