package density_test

import (
	"errors"
	"math"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
	"tidemark/data/ising"
)

// TestExhaustiveDivergenceProduct checks against closed forms for product
// distributions (common practice): KL = N·[a ln(a/b) + (1−a) ln((1−a)/(1−b))],
// entropy = N·h(a), and for N = 1 the total variation is |a − b|.
func TestExhaustiveDivergenceProduct(t *testing.T) {
	a, b := 0.3, 0.45
	for _, n := range []int{1, 5, 13} {
		p := densitytest.Product{N: n, P: func([]float64) float64 { return a }}
		q := densitytest.Product{N: n, P: func([]float64) float64 { return b }}
		for _, threads := range []int{1, 3} {
			d, err := density.ExhaustiveDivergence(p, q, []float64{0}, threads, nil)
			if err != nil {
				t.Fatal(err)
			}
			kl := float64(n) * (a*math.Log(a/b) + (1-a)*math.Log((1-a)/(1-b)))
			h := -float64(n) * (a*math.Log(a) + (1-a)*math.Log(1-a))
			if math.Abs(d.KL-kl) > 1e-12 || math.Abs(d.Entropy-h) > 1e-12 || d.States != 1<<n {
				t.Errorf("n=%d: KL %v entropy %v states %d, want %v %v %d", n, d.KL, d.Entropy, d.States, kl, h, 1<<n)
			}
			if n == 1 && math.Abs(d.TV-math.Abs(a-b)) > 1e-15 {
				t.Errorf("TV %v, want %v", d.TV, math.Abs(a-b))
			}
			if math.Abs(d.ModelMass-1) > 1e-12 || math.Abs(d.ExactMass-1) > 1e-12 {
				t.Errorf("masses %v %v, want 1", d.ExactMass, d.ModelMass)
			}
		}
	}
}

// shifted reports the Ising source's probabilities at a fixed other T.
type shifted struct {
	*ising.Source
	T float64
}

func (s shifted) LogProb(dst []float64, xs []uint8, _ []float64) error {
	return s.Source.LogProb(dst, xs, []float64{s.T})
}

// TestExhaustiveDivergenceIsing checks the sum over all states against
// thermodynamic identities for Boltzmann distributions (common practice):
// KL(p_T1‖p_T2) = (1/T2 − 1/T1)⟨E⟩_1 + ln Z_2 − ln Z_1 and S = ln Z + ⟨E⟩/T,
// with ⟨E⟩ and ln Z from the Ising package's class sums.
func TestExhaustiveDivergenceIsing(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 3, Lx: 4}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	T1, T2 := 2.0, 2.5
	d, err := density.ExhaustiveDivergence(src, shifted{src, T2}, []float64{T1}, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	e := src.Enumeration()
	c1, c2 := ising.Couplings{T: T1, Jx: 1, Jy: 1}, ising.Couplings{T: T2, Jx: 1, Jy: 1}
	mE, _, _ := e.Moments(c1)
	kl := (1/T2-1/T1)*mE + e.LogZ(c2) - e.LogZ(c1)
	s := e.LogZ(c1) + mE/T1
	if math.Abs(d.KL-kl) > 1e-10 || math.Abs(d.Entropy-s) > 1e-10 {
		t.Fatalf("KL %v entropy %v, want %v %v", d.KL, d.Entropy, kl, s)
	}
	if d.TV <= 0 || d.TV >= 1 {
		t.Fatalf("TV %v out of (0, 1)", d.TV)
	}
	d, err = density.ExhaustiveDivergence(src, src, []float64{T1}, 2, nil)
	if err != nil || d.KL != 0 || d.TV != 0 {
		t.Fatalf("a source against itself: KL %v TV %v err %v, want 0 0", d.KL, d.TV, err)
	}
}

type notEnum struct{ densitytest.Product }

func (notEnum) Enumerable() bool { return false }

func TestExhaustiveDivergenceRefuses(t *testing.T) {
	p := densitytest.Product{N: 3, P: func([]float64) float64 { return 0.5 }}
	if _, err := density.ExhaustiveDivergence(notEnum{p}, p, []float64{0}, 1, nil); !errors.Is(err, density.ErrNotEnumerable) {
		t.Fatalf("non-enumerable source: %v", err)
	}
	big := densitytest.Product{N: 30, P: p.P}
	if _, err := density.ExhaustiveDivergence(big, big, []float64{0}, 1, nil); !errors.Is(err, density.ErrNotEnumerable) {
		t.Fatalf("2^30 states: %v", err)
	}
	if _, err := density.ExhaustiveDivergence(p, densitytest.Product{N: 4, P: p.P}, []float64{0}, 1, nil); err == nil {
		t.Fatal("mismatched site counts accepted")
	}
}
