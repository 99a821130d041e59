package ising

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"

	"tidemark/data"
)

// beale4x4 is the density of states g(E) of the 4×4 periodic Ising lattice,
// keyed by E/J, as tabulated by P. D. Beale, Phys. Rev. Lett. 76, 78 (1996)
// (values from memory; checked below by enumeration and by their sum 2^16).
var beale4x4 = map[int]int64{
	-32: 2, -24: 32, -20: 64, -16: 424, -12: 1728, -8: 6688, -4: 13568, 0: 20524,
	4: 13568, 8: 6688, 12: 1728, 16: 424, 20: 64, 24: 32, 32: 2,
}

func TestDensityOfStates4x4(t *testing.T) {
	var sum int64
	for _, c := range beale4x4 {
		sum += c
	}
	if sum != 1<<16 { // 2^N states in all (common practice)
		t.Fatalf("Beale's 4×4 g(E) sums to %d, want 65536", sum)
	}
	e, err := NewEnumeration(Lattice{4, 4})
	if err != nil {
		t.Fatal(err)
	}
	dos := e.DensityOfStates()
	if len(dos) != len(beale4x4) {
		t.Fatalf("got %d levels, want %d: %v", len(dos), len(beale4x4), dos)
	}
	for _, lv := range dos {
		if want := beale4x4[-lv.BondSum]; lv.Count != want {
			t.Errorf("g(E=%d) = %d, want %d (Beale 1996)", -lv.BondSum, lv.Count, want)
		}
	}
}

// bruteLogZ sums exp(−H/T) over every state with Lattice.Energy, a path
// independent of the class bookkeeping.
func bruteLogZ(l Lattice, c Couplings) float64 {
	n := l.N()
	x := make([]uint8, n)
	lw := make([]float64, 1<<n)
	mx := math.Inf(-1)
	for s := range lw {
		StateOf(x, uint32(s))
		lw[s] = -l.Energy(x, c) / c.T
		mx = math.Max(mx, lw[s])
	}
	sum := 0.0
	for _, v := range lw {
		sum += math.Exp(v - mx)
	}
	return mx + math.Log(sum)
}

func TestExactAgainstBruteForce(t *testing.T) {
	cases := []struct {
		l Lattice
		c Couplings
	}{
		{Lattice{4, 4}, Couplings{T: 2.3, Jx: 1, Jy: 1}},
		{Lattice{3, 5}, Couplings{T: 1.1, Jx: 0.7, Jy: 1.3, H: 0.2}},
		{Lattice{2, 3}, Couplings{T: 0.8, Jx: -1, Jy: 0.5, H: -0.4}},
		{Lattice{3, 4}, Couplings{T: 5, Jx: 1, Jy: -2, H: 1}},
	}
	for _, tc := range cases {
		e, err := NewEnumeration(tc.l)
		if err != nil {
			t.Fatal(err)
		}
		got, want := e.LogZ(tc.c), bruteLogZ(tc.l, tc.c)
		if math.Abs(got-want) > 1e-11*math.Max(1, math.Abs(want)) {
			t.Errorf("%v %+v: LogZ = %.15g, brute force %.15g", tc.l, tc.c, got, want)
		}
		// Probabilities sum to one.
		x := make([]uint8, tc.l.N())
		sum := 0.0
		for s := uint32(0); s < 1<<tc.l.N(); s++ {
			StateOf(x, s)
			sum += math.Exp(e.LogProb(x, tc.c))
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("%v: probabilities sum to %v", tc.l, sum)
		}
	}
}

func TestMomentsAgainstDerivative(t *testing.T) {
	// ⟨E⟩ = T² ∂lnZ/∂T and Var(E) = T² ∂⟨E⟩/∂T (common practice), by
	// central differences.
	e, _ := NewEnumeration(Lattice{4, 4})
	c := Couplings{T: 2.4, Jx: 1, Jy: 0.8, H: 0.1}
	mean, v, absM := e.Moments(c)
	d := 1e-5
	cp, cm := c, c
	cp.T += d
	cm.T -= d
	numE := c.T * c.T * (e.LogZ(cp) - e.LogZ(cm)) / (2 * d)
	if math.Abs(numE-mean) > 1e-5 {
		t.Errorf("⟨E⟩ = %v, derivative of ln Z gives %v", mean, numE)
	}
	ep, _, _ := e.Moments(cp)
	em, _, _ := e.Moments(cm)
	if numV := c.T * c.T * (ep - em) / (2 * d); math.Abs(numV-v) > 1e-4 {
		t.Errorf("Var(E) = %v, derivative of ⟨E⟩ gives %v", v, numV)
	}
	if absM <= 0 || absM > 16 {
		t.Errorf("⟨|M|⟩ = %v outside (0, 16]", absM)
	}
}

func TestSourceFromMeta(t *testing.T) {
	src, _ := json.Marshal(SourceMeta{Generator: "ising", Lattice: []int{3, 4}, Boundary: "periodic", Jx: 1, Jy: 0.5, Field: 0.3, Axes: []string{"T"}})
	s, err := SourceFromMeta(data.Meta{ParamNames: []string{"T"}, Alphabet: 2, Lattice: []int{3, 4}, Source: src})
	if err != nil {
		t.Fatal(err)
	}
	l := Lattice{3, 4}
	rng := rand.New(rand.NewPCG(1, 2))
	xs := make([]uint8, 5*12)
	if err := s.Sample(xs, 5, []float64{2}, rng); err != nil {
		t.Fatal(err)
	}
	dst := make([]float64, 5)
	if err := s.LogProb(dst, xs, []float64{2}); err != nil {
		t.Fatal(err)
	}
	c := Couplings{T: 2, Jx: 1, Jy: 0.5, H: 0.3}
	lz := bruteLogZ(l, c)
	for m := range dst {
		if want := -l.Energy(xs[m*12:(m+1)*12], c)/2 - lz; math.Abs(dst[m]-want) > 1e-12 {
			t.Errorf("row %d: log p = %v, want %v", m, dst[m], want)
		}
	}
	for _, bad := range [][]float64{{0}, {-1}, {1, 2}} {
		if err := s.LogProb(dst, xs, bad); err == nil {
			t.Errorf("λ = %v accepted", bad)
		}
	}
	if _, err := NewSource(l, []string{"beta"}, c); err == nil {
		t.Error("unknown name accepted")
	}
	if _, err := NewEnumeration(Lattice{5, 5}); err == nil {
		t.Error("25 sites accepted")
	}
}
