package train

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/ising"
	"tidemark/indicator"
)

// TestAdamFirstStep checks Kingma & Ba (ICLR 2015), Sec. 2.1: with bias
// correction the first update is lr·g/(|g|+ε), i.e. a step of size lr
// against the gradient's sign whatever its magnitude.
func TestAdamFirstStep(t *testing.T) {
	a := NewAdam([]int{3}, 0.9, 0.999, 1e-8, 0)
	w := [][]float64{{1, 1, 1}}
	a.Update(w, [][]float64{{1000, -0.001, 0}}, 0.01)
	want := []float64{1 - 0.01*1000/(1000+1e-8), 1 + 0.01*0.001/(0.001+1e-8), 1}
	for i := range want {
		if math.Abs(w[0][i]-want[i]) > 1e-15 {
			t.Fatalf("w[%d] = %v, want %v", i, w[0][i], want[i])
		}
	}
	if a.Step != 1 {
		t.Fatalf("step %d, want 1", a.Step)
	}
}

// TestAdamConverges minimises f(x, y) = (x−3)² + 10(y+1)².
func TestAdamConverges(t *testing.T) {
	a := NewAdam([]int{2}, 0.9, 0.999, 1e-8, 0)
	w := [][]float64{{0, 0}}
	g := [][]float64{{0, 0}}
	for i := 0; i < 5000; i++ {
		g[0][0] = 2 * (w[0][0] - 3)
		g[0][1] = 20 * (w[0][1] + 1)
		a.Update(w, g, 0.01)
	}
	if math.Abs(w[0][0]-3) > 1e-3 || math.Abs(w[0][1]+1) > 1e-3 {
		t.Fatalf("minimum found at %v, want (3, −1)", w[0])
	}
}

// TestAdamWDecay checks the decoupled decay of Loshchilov & Hutter (ICLR
// 2019): with a zero gradient the moments stay zero and each step
// multiplies a decayed weight by exactly 1 − lr·λ; undecayed ones stay.
func TestAdamWDecay(t *testing.T) {
	a := NewAdam([]int{1, 1}, 0.9, 0.999, 1e-8, 0.1)
	a.Decay = []bool{true, false}
	w := [][]float64{{2}, {2}}
	for i := 0; i < 3; i++ {
		a.Update(w, [][]float64{{0}, {0}}, 0.5)
	}
	if want := 2 * math.Pow(1-0.05, 3); math.Abs(w[0][0]-want) > 1e-15 || w[1][0] != 2 {
		t.Fatalf("weights %v, want [%v] and [2]", w, want)
	}
}

func TestClipGlobalNorm(t *testing.T) {
	g := [][]float64{{3}, {4}}
	if n := ClipGlobalNorm(g, 1); n != 5 {
		t.Fatalf("norm %v, want 5", n)
	}
	if math.Abs(g[0][0]-0.6) > 1e-15 || math.Abs(g[1][0]-0.8) > 1e-15 {
		t.Fatalf("clipped %v, want [0.6] [0.8]", g)
	}
	g = [][]float64{{0.3}, {0.4}}
	ClipGlobalNorm(g, 1)
	if g[0][0] != 0.3 || g[1][0] != 0.4 {
		t.Fatalf("a gradient under the limit was changed: %v", g)
	}
}

func TestParseHoldout(t *testing.T) {
	ds, err := data.New(12, 1, []string{"T", "h"}, 2, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	i := 0
	for _, T := range []float64{1, 2, 2.2 + 1e-15, 3} {
		for _, h := range []float64{0, 0.5, 1} {
			ds.Params[2*i], ds.Params[2*i+1] = T, h
			i++
		}
	}
	g := data.NewGrid(ds)
	cases := []struct {
		spec string
		want []int
		err  string
	}{
		{"", nil, ""},
		{"T=2.2", []int{6, 7, 8}, ""},
		{"T=2.20000001", []int{6, 7, 8}, ""},
		{"T=0.999999", []int{0, 1, 2}, ""},
		{"T=2;3", []int{3, 4, 5, 9, 10, 11}, ""},
		{"T=1.5:2.5", []int{3, 4, 5, 6, 7, 8}, ""},
		{"T=2:2.2, h=0.5", []int{4, 7}, ""},
		{"h=1", []int{2, 5, 8, 11}, ""},
		{"T=2.5", nil, "T=2.5 is not a grid value; the dataset's values of T are 1, 2, 2.2, 3"},
		{"x=1", nil, "expected a parameter name"},
		{"T=5:6", nil, "selects no grid point"},
		{"T=3:1", nil, "start ≤ stop"},
		{"T", nil, "no '='"},
		{"T=1:3", nil, "at least 2 left"},
		{"T=1, T=2", nil, "twice"},
		{"T=abc", nil, "expected a number"},
	}
	for _, tc := range cases {
		got, err := ParseHoldout(tc.spec, g)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%q: error %v, want one containing %q", tc.spec, err, tc.err)
			}
			continue
		}
		if err != nil || !slices.Equal(got, tc.want) {
			t.Errorf("%q: %v, %v; want %v", tc.spec, got, err, tc.want)
		}
	}
}

// bernoulli is a product source: every site is 1 with probability p(λ).
type bernoulli struct {
	n int
	p func(l []float64) float64
}

func (b bernoulli) Sites() int       { return b.n }
func (b bernoulli) Alphabet() int    { return 2 }
func (b bernoulli) ParamDim() int    { return 1 }
func (b bernoulli) Enumerable() bool { return true }
func (b bernoulli) LogProb(dst []float64, xs []uint8, l []float64) error {
	p := b.p(l)
	for m := range dst {
		s := 0.0
		for _, v := range xs[m*b.n : (m+1)*b.n] {
			if v == 1 {
				s += math.Log(p)
			} else {
				s += math.Log1p(-p)
			}
		}
		dst[m] = s
	}
	return nil
}

var _ indicator.Enumerable = bernoulli{}

// TestExactDivergenceProduct checks against closed forms for product
// distributions (common practice): KL = N·[a ln(a/b) + (1−a) ln((1−a)/(1−b))],
// entropy = N·h(a), and for N = 1 the total variation is |a − b|.
func TestExactDivergenceProduct(t *testing.T) {
	a, b := 0.3, 0.45
	for _, n := range []int{1, 5, 13} {
		p := bernoulli{n, func([]float64) float64 { return a }}
		q := bernoulli{n, func([]float64) float64 { return b }}
		for _, threads := range []int{1, 3} {
			d, err := ExactDivergence(p, q, []float64{0}, threads, nil)
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

// TestExactDivergenceIsing checks the sum over all states against
// thermodynamic identities for Boltzmann distributions (common practice):
// KL(p_T1‖p_T2) = (1/T2 − 1/T1)⟨E⟩_1 + ln Z_2 − ln Z_1 and S = ln Z + ⟨E⟩/T,
// with ⟨E⟩ and ln Z from the Ising package's class sums.
func TestExactDivergenceIsing(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 3, Lx: 4}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	T1, T2 := 2.0, 2.5
	d, err := ExactDivergence(src, shifted{src, T2}, []float64{T1}, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	e := src.Exact()
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
	d, err = ExactDivergence(src, src, []float64{T1}, 2, nil)
	if err != nil || d.KL != 0 || d.TV != 0 {
		t.Fatalf("a source against itself: KL %v TV %v err %v, want 0 0", d.KL, d.TV, err)
	}
}

type notEnum struct{ bernoulli }

func (notEnum) Enumerable() bool { return false }

func TestExactDivergenceRefuses(t *testing.T) {
	p := bernoulli{3, func([]float64) float64 { return 0.5 }}
	if _, err := ExactDivergence(notEnum{p}, p, []float64{0}, 1, nil); !errors.Is(err, ErrNotEnumerable) {
		t.Fatalf("non-enumerable source: %v", err)
	}
	big := bernoulli{30, p.p}
	if _, err := ExactDivergence(big, big, []float64{0}, 1, nil); !errors.Is(err, ErrNotEnumerable) {
		t.Fatalf("2^30 states: %v", err)
	}
	if _, err := ExactDivergence(p, bernoulli{4, p.p}, []float64{0}, 1, nil); err == nil {
		t.Fatal("mismatched site counts accepted")
	}
}

// TestMovingAverage checks the debiased moving average against its
// definition θ̄_t = Σ_s d^(t−s) θ_s / Σ_s d^(t−s) on a worked example:
// with d = 1/2 and weights 1, 2, 3 it is (1/4 + 2/2 + 3)/(1/4 + 1/2 + 1)
// = 17/7; and constant weights average to themselves from the first step.
func TestMovingAverage(t *testing.T) {
	cases := []struct {
		name  string
		steps []float64
		want  float64
	}{
		{"worked example", []float64{1, 2, 3}, 17.0 / 7},
		{"constant", []float64{0.3}, 0.3},
		{"constant, many steps", []float64{-2, -2, -2, -2}, -2},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := &run{decay: 0.5, w: [][]float64{{0}}, avg: [][]float64{{0}}, adam: &Adam{}}
			for _, v := range c.steps {
				r.w[0][0] = v
				r.adam.Step++
				r.accumulate()
			}
			got := [][]float64{{0}}
			r.averaged(got)
			if math.Abs(got[0][0]-c.want) > 1e-12 {
				t.Fatalf("average of %v with d = 1/2: %v, want %v", c.steps, got[0][0], c.want)
			}
		})
	}
}
