package posterior

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// bernoulliLogLik is log p(x|θ) of a product-Bernoulli family, for a group of
// snapshots with s ones among n site values in total: s ln θ + (n−s) ln(1−θ).
func bernoulliLogLik(thetas []float64, s, n int) []float64 {
	out := make([]float64, len(thetas))
	for k, th := range thetas {
		out[k] = float64(s)*math.Log(th) + float64(n-s)*math.Log1p(-th)
	}
	return out
}

// TestBernoulliMatchesBeta is the worked example: for independent Bernoulli
// sites with success probability θ and a uniform prior on θ, the posterior
// after s ones in n values is Beta(s+1, n−s+1) (Bayes–Laplace; common
// practice). On a fine uniform grid of θ the grid posterior approaches it:
// its mode s/n, mean (s+1)/(n+2), standard deviation and central quantiles
// (from gonum's Beta distribution) agree within the grid spacing (the
// quantiles, interpolated within cells, within a quarter of it).
func TestBernoulliMatchesBeta(t *testing.T) {
	const K = 999
	h := 1.0 / (K + 1)
	thetas := make([]float64, K)
	points := make([][]float64, K)
	for k := range thetas {
		thetas[k] = h * float64(k+1)
		points[k] = []float64{thetas[k]}
	}
	for _, tc := range []struct{ s, n int }{{3, 10}, {30, 100}, {700, 1000}, {12, 16 * 4}} {
		t.Run(fmt.Sprintf("s=%d,n=%d", tc.s, tc.n), func(t *testing.T) {
			lp, err := Normalize(bernoulliLogLik(thetas, tc.s, tc.n))
			if err != nil {
				t.Fatal(err)
			}
			sums, err := Axes(points, Probs(lp), 0.68)
			if err != nil {
				t.Fatal(err)
			}
			got := sums[0]
			beta := distuv.Beta{Alpha: float64(tc.s + 1), Beta: float64(tc.n - tc.s + 1)}
			checks := []struct {
				name      string
				got, want float64
				tol       float64
			}{
				{"MAP", got.MAP, float64(tc.s) / float64(tc.n), h},
				{"mean", got.Mean, beta.Mean(), 1e-4},
				{"std", got.Std, beta.StdDev(), 1e-3 * beta.StdDev()},
				{"lo", got.Lo, beta.Quantile(0.16), h / 4},
				{"hi", got.Hi, beta.Quantile(0.84), h / 4},
			}
			for _, c := range checks {
				if math.Abs(c.got-c.want) > c.tol {
					t.Errorf("%s = %.6f, want %.6f ± %.2g", c.name, c.got, c.want, c.tol)
				}
			}
		})
	}
}

// TestGroupIsProductOfSnapshots checks that the group posterior equals the
// posterior of the pooled counts (the product of Bernoulli likelihoods is the
// likelihood of the total count; common practice).
func TestGroupIsProductOfSnapshots(t *testing.T) {
	thetas := []float64{0.2, 0.35, 0.5, 0.65, 0.8}
	snaps := [][2]int{{3, 8}, {5, 8}, {2, 8}, {6, 8}} // (ones, sites)
	K := len(thetas)
	ll := make([]float64, 0, len(snaps)*K)
	S, N := 0, 0
	for _, sn := range snaps {
		ll = append(ll, bernoulliLogLik(thetas, sn[0], sn[1])...)
		S, N = S+sn[0], N+sn[1]
	}
	g, err := Normalize(GroupLogLik(ll, K, []int{0, 1, 2, 3}))
	if err != nil {
		t.Fatal(err)
	}
	// Closed form on the grid: π_k = θ_k^S (1−θ_k)^(N−S) / Σ_j θ_j^S (1−θ_j)^(N−S).
	z := 0.0
	for _, th := range thetas {
		z += math.Pow(th, float64(S)) * math.Pow(1-th, float64(N-S))
	}
	for k, th := range thetas {
		want := math.Pow(th, float64(S)) * math.Pow(1-th, float64(N-S)) / z
		if got := math.Exp(g[k]); math.Abs(got-want) > 1e-12 {
			t.Errorf("π_%d = %.15g, want %.15g", k, got, want)
		}
	}
}

func TestNormalizeUnderflowAndErrors(t *testing.T) {
	// Log-likelihoods of thousands of snapshots are far below the smallest
	// float64; normalising in log space must still give the right ratios.
	lp, err := Normalize([]float64{-1e5, -1e5 + math.Log(3), math.Inf(-1)})
	if err != nil {
		t.Fatal(err)
	}
	if p := Probs(lp); math.Abs(p[0]-0.25) > 1e-9 || math.Abs(p[1]-0.75) > 1e-9 || p[2] != 0 {
		t.Errorf("probabilities %v, want [0.25 0.75 0]", p)
	}
	for _, tc := range []struct {
		name string
		in   []float64
	}{
		{"empty", nil},
		{"NaN", []float64{0, math.NaN()}},
		{"+Inf", []float64{0, math.Inf(1)}},
		{"all -Inf", []float64{math.Inf(-1), math.Inf(-1)}},
	} {
		if _, err := Normalize(tc.in); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
	if _, err := Normalize([]float64{math.Inf(-1)}); !errors.Is(err, ErrNoSupport) {
		t.Errorf("all -Inf: %v, want ErrNoSupport", err)
	}
}

// TestGridLimited checks that a posterior held by one grid value is marked
// as limited by the grid.
func TestGridLimited(t *testing.T) {
	s, err := Summarize([]float64{1, 2, 3}, []float64{0.1, 0.85, 0.05}, 0.68)
	if err != nil {
		t.Fatal(err)
	}
	if !s.GridLimited || s.MAP != 2 || !(s.Lo > 1.5 && s.Hi < 2.5) {
		t.Errorf("summary %+v, want a grid-limited interval inside the cell of 2", s)
	}
}

func TestSummarizeRefusesBadInput(t *testing.T) {
	for _, tc := range []struct {
		name     string
		v, m     []float64
		credible float64
	}{
		{"lengths", []float64{1, 2}, []float64{1}, 0.68},
		{"mass", []float64{1, 2}, []float64{0.5, 0.6}, 0.68},
		{"negative", []float64{1, 2}, []float64{1.5, -0.5}, 0.68},
		{"order", []float64{2, 1}, []float64{0.5, 0.5}, 0.68},
		{"credible", []float64{1, 2}, []float64{0.5, 0.5}, 1},
	} {
		if _, err := Summarize(tc.v, tc.m, tc.credible); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

func TestMarginalAndEdge(t *testing.T) {
	// A 2×3 product grid; the mass sits at the edge of axis 0, 0.8 of it on
	// one value (limited by the grid).
	pts := [][]float64{{1, 10}, {1, 20}, {1, 30}, {2, 10}, {2, 20}, {2, 30}}
	probs := []float64{0.5, 0.2, 0.1, 0.1, 0.05, 0.05}
	v, m := Marginal(pts, 1, probs)
	if fmt.Sprint(v) != "[10 20 30]" || math.Abs(m[0]-0.6) > 1e-12 || math.Abs(m[1]-0.25) > 1e-12 {
		t.Errorf("marginal on axis 1: %v %v", v, m)
	}
	s, err := Axes(pts, probs, 0.68)
	if err != nil {
		t.Fatal(err)
	}
	// Axis 1 has masses 0.6, 0.25, 0.15 on the cells [10, 15], [15, 25],
	// [25, 30]: the 16% point lies 0.16/0.6 into the first cell, the 84%
	// point 0.24/0.25 into the second.
	if s[0].MAP != 1 || !s[0].AtEdge || !s[0].GridLimited || s[1].GridLimited || math.Abs(s[1].Lo-(10+5*0.16/0.6)) > 1e-12 || math.Abs(s[1].Hi-(15+10*0.24/0.25)) > 1e-12 {
		t.Errorf("summaries %+v", s)
	}
}

// Example: three snapshots of 4 independent sites, each 1 with probability
// θ, scored on a grid of θ; the group posterior concentrates near the
// observed fraction of ones (9 of 12: π_k ∝ θ_k^9 (1−θ_k)^3). The interval
// spreads each value's mass over its cell (0.6 to 0.8 for θ = 0.7).
func Example() {
	thetas := []float64{0.1, 0.3, 0.5, 0.7, 0.9}
	points := [][]float64{{0.1}, {0.3}, {0.5}, {0.7}, {0.9}}
	ones := []int{3, 2, 4} // ones in each snapshot of 4 sites
	var ll []float64
	for _, s := range ones {
		for _, th := range thetas {
			ll = append(ll, float64(s)*math.Log(th)+float64(4-s)*math.Log(1-th))
		}
	}
	lp, _ := Normalize(GroupLogLik(ll, len(thetas), []int{0, 1, 2}))
	sum, _ := Axes(points, Probs(lp), 0.68)
	fmt.Printf("posterior %.3f\n", Probs(lp))
	fmt.Printf("maximum θ = %.1f, 68%% central interval [%.3f, %.3f]\n", sum[0].MAP, sum[0].Lo, sum[0].Hi)
	// Output:
	// posterior [0.000 0.004 0.141 0.631 0.224]
	// maximum θ = 0.7, 68% central interval [0.605, 0.829]
}
