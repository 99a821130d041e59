package train

import (
	"math"
	"slices"
	"strings"
	"testing"

	"tidemark/data"
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
