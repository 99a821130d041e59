package indicator

import (
	"context"
	"math"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

func curveByName(t *testing.T, cs []*Curve, name string) *Curve {
	t.Helper()
	for _, c := range cs {
		if c.Name == name {
			return c
		}
	}
	t.Fatalf("no curve %q", name)
	return nil
}

// closedForms computes the 1-D indicators of the product-Bernoulli family at
// grid xs by summing binomial terms over the number of ones (common
// practice: a product distribution depends on x only through that count).
func closedForms(src *densitytest.Logistic, xs []float64) map[string][]float64 {
	N, K := src.N, len(xs)
	ps := make([]float64, K)
	for k, x := range xs {
		ps[k] = src.P([]float64{x})
	}
	out := map[string][]float64{}
	// pk(j) = probability of one snapshot with j ones at point k
	pk := func(k, j int) float64 { return countProb(ps[k], N, j) }
	mult := func(j int) float64 { return math.Exp(logBinom(N, j)) }
	for t := 0; t < K-1; t++ {
		tv, jsd, lbc := 0.0, 0.0, 0.0
		for j := 0; j <= N; j++ {
			a, b := pk(t, j), pk(t+1, j)
			tv += mult(j) * math.Abs(a-b) / 2
			m := (a + b) / 2
			jsd += mult(j) * 0.5 * (a*math.Log(a/m) + b*math.Log(b/m))
			sa, sb := 0.0, 0.0
			for k := 0; k < K; k++ {
				if k <= t {
					sa += pk(k, j)
				} else {
					sb += pk(k, j)
				}
			}
			lbc += mult(j) * math.Min(sa, sb)
		}
		dx := xs[t+1] - xs[t]
		out[Local] = append(out[Local], tv)
		out[Fisher] = append(out[Fisher], 8*jsd/(dx*dx))
		out[LBC] = append(out[LBC], 1-lbc/float64(K))
	}
	// pbm: E_k[Σ_j π_j λ_j]
	yk := make([]float64, K)
	for k := 0; k < K; k++ {
		for j := 0; j <= N; j++ {
			s, sl := 0.0, 0.0
			for i := 0; i < K; i++ {
				s += pk(i, j)
				sl += pk(i, j) * xs[i]
			}
			yk[k] += mult(j) * pk(k, j) * sl / s
		}
	}
	// sl with the default end regions {λ_0} and {λ_{K−1}} (one point each for K < 15).
	sk := make([]float64, K)
	for k := 0; k < K; k++ {
		for j := 0; j <= N; j++ {
			sk[k] += mult(j) * pk(k, j) * pk(0, j) / (pk(0, j) + pk(K-1, j))
		}
	}
	for t := 0; t < K-1; t++ {
		out[SL] = append(out[SL], math.Abs(sk[t+1]-sk[t])/(xs[t+1]-xs[t]))
		out[PBM] = append(out[PBM], (yk[t+1]-yk[t])/(xs[t+1]-xs[t]))
	}
	// Fisher information of N i.i.d. Bernoulli sites: N p'²/(p(1−p)) with
	// p' = a p(1−p) (common practice).
	for _, p := range ps {
		out["fisher_deriv"] = append(out["fisher_deriv"], float64(N)*src.A*src.A*p*(1-p))
	}
	return out
}

func TestExactSumsMatchClosedForms(t *testing.T) {
	src := &densitytest.Logistic{N: 10, D: 1, A: 3, C: 1}
	xs := linspace(0, 2, 9)
	ds := bernoulliData(src, xs, nil, 4, 1)
	res, err := Run(context.Background(), []density.Source{src}, ds, Config{ExactSums: true, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	want := closedForms(src, xs)
	tests := []struct {
		name string
		tol  float64 // relative
	}{
		{Local, 1e-9}, {SL, 1e-9}, {Fisher, 1e-9}, {LBC, 1e-9}, {PBM, 1e-9},
		{"fisher_deriv", 1e-3}, // central difference, step Δ/100
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := curveByName(t, res.Curves, tc.name)
			w := want[tc.name]
			if len(c.Val) != len(w) {
				t.Fatalf("%d values, want %d", len(c.Val), len(w))
			}
			for i := range w {
				if d := math.Abs(c.Val[i] - w[i]); d > tc.tol*math.Max(1, math.Abs(w[i])) {
					t.Errorf("at %v: got %.10g, closed form %.10g", c.Pos[i], c.Val[i], w[i])
				}
			}
		})
	}
	// The family's Fisher information peaks at p = 1/2, λ = c (common practice).
	fd := curveByName(t, res.Curves, "fisher_deriv")
	if len(fd.Peaks) != 1 || math.Abs(fd.Peaks[0].At[0]-src.C) > 0.02 {
		t.Errorf("fisher_deriv peaks %+v, want one near %g", fd.Peaks, src.C)
	}
}

func TestJSDTraceMapMatchesFisherMetric(t *testing.T) {
	// p = logistic(a(T − c − b·J)): the Fisher metric of N independent sites
	// is N p(1−p) a² (1, −b; −b, b²), trace N a² p(1−p)(1 + b²) (common
	// practice).
	src := &densitytest.Logistic{N: 6, D: 2, A: 2, C: 1, B: 0.5}
	ts, js := linspace(0, 2, 21), linspace(0, 1, 11)
	ds := bernoulliData(src, ts, js, 2, 1)
	res, err := Run(context.Background(), []density.Source{src}, ds, Config{ExactSums: true, Indicators: []string{Fisher}, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	c := curveByName(t, res.Curves, Fisher)
	if len(c.Pos) != 20*10 {
		t.Fatalf("%d cell centres, want 200", len(c.Pos))
	}
	for i, p := range c.Pos {
		q := src.P(p)
		want := float64(src.N) * src.A * src.A * q * (1 - q) * (1 + src.B*src.B)
		// discretisation error O(Δ²) of the divergences and of the edge means
		if d := math.Abs(c.Val[i] - want); d > 0.03*want {
			t.Errorf("trace at %v: %.5g, closed form %.5g", p, c.Val[i], want)
		}
	}
	found := false
	for _, b := range res.Boundaries {
		if b.Indicator == Fisher && b.Axis == "T" {
			found = true
			for _, p := range b.Points {
				if w := src.C + src.B*p[1]; math.Abs(p[0]-w) > 0.02 {
					t.Errorf("fisher ridge point %v, want T = %.3f", p, w)
				}
			}
		}
	}
	if !found {
		t.Error("no boundary from the fisher trace map")
	}
}
