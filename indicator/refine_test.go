package indicator

import (
	"context"
	"math"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

func TestRefineAndZoomBetweenGridPoints(t *testing.T) {
	src := &densitytest.Logistic{N: 16, D: 1, A: 6, C: 1.03}
	xs := linspace(0, 2, 5)
	ds := bernoulliData(src, xs, nil, 4000, 4)
	res, err := Run(context.Background(), []density.Source{src}, ds, Config{Refine: 4, ModelSamples: 4000, Zoom: true, Bootstrap: 50, Threads: 2, Seed: 9, Indicators: []string{Fisher}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Layout.K() != 17 {
		t.Fatalf("refined grid has %d points, want 4·(5−1)+1 = 17", res.Layout.K())
	}
	fd := curveByName(t, res.Curves, "fisher_deriv")
	for i, p := range fd.Pos {
		pp := src.P(p)
		// N a² p(1−p) for independent Bernoulli sites (common practice)
		want := float64(src.N) * src.A * src.A * pp * (1 - pp)
		if d := math.Abs(fd.Val[i] - want); d > 5*fd.Err[i]+1e-9 {
			t.Errorf("fisher_deriv at %v: %.4g ± %.2g, closed form %.4g", p, fd.Val[i], fd.Err[i], want)
		}
	}
	if len(fd.Peaks) != 1 || math.Abs(fd.Peaks[0].At[0]-src.C) > 3*fd.Peaks[0].Err[0]+0.02 {
		t.Errorf("fisher_deriv peaks %+v, want one at %g", fd.Peaks, src.C)
	}
	if len(res.Zoom) == 0 {
		t.Fatal("no zoom pass")
	}
	z := res.Zoom[0]
	for _, zz := range res.Zoom {
		if math.Abs(zz.Around[0]-src.C) < math.Abs(z.Around[0]-src.C) {
			z = zz
		}
	}
	if ax := z.Layout.Axes[0]; len(ax) != 9 || math.Abs(ax[8]-ax[0]-2*0.5/4) > 1e-12 {
		t.Errorf("zoom grid %v, want 2·4+1 points over ±1 refined step (0.125)", ax)
	}
	zf := curveByName(t, z.Curves, "fisher_deriv")
	if len(zf.Peaks) == 0 || math.Abs(zf.Peaks[0].At[0]-src.C) > 3*zf.Peaks[0].Err[0]+0.02 {
		t.Errorf("zoom fisher_deriv peaks %+v, want one at %g", zf.Peaks, src.C)
	}
}

func TestSeveralSourcesAddTheirSpread(t *testing.T) {
	a := &densitytest.Logistic{N: 16, D: 1, A: 6, C: 1.0}
	b := &densitytest.Logistic{N: 16, D: 1, A: 6, C: 1.3}
	ds := bernoulliData(a, linspace(0, 2, 21), nil, 500, 4)
	// Refine 2: fisher_deriv reads each source's own samples, so the two
	// peak where their own Fisher information does.
	cfg := Config{Bootstrap: 30, Threads: 2, Seed: 3, ModelSamples: 4000, Refine: 2, Indicators: []string{Fisher}}
	one, err := Run(context.Background(), []density.Source{a}, ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	two, err := Run(context.Background(), []density.Source{a, b}, ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	f1 := curveByName(t, one.Curves, "fisher_deriv")
	f2 := curveByName(t, two.Curves, "fisher_deriv")
	if len(f1.Peaks) != 1 || len(f2.Peaks) != 1 {
		t.Fatalf("peaks %+v and %+v", f1.Peaks, f2.Peaks)
	}
	// Two sources peaking 0.3 apart: the spread alone is 0.3/√2 ≈ 0.21
	// (sample standard deviation of two values).
	if e := f2.Peaks[0].Err[0]; e < 0.15 || e < f1.Peaks[0].Err[0] {
		t.Errorf("peak error with two sources %.3g, with one %.3g; want ≥ 0.15", e, f1.Peaks[0].Err[0])
	}
	if x := f2.Peaks[0].At[0]; x < 1.0 || x > 1.3 {
		t.Errorf("combined peak at %g, want between the sources' 1.0 and 1.3", x)
	}
}

// TestRefinedScanIndependentOfThreads: the snapshots drawn at refined
// points (in parallel over points) and the curves do not depend on the
// number of threads.
func TestRefinedScanIndependentOfThreads(t *testing.T) {
	src := &densitytest.Logistic{N: 12, D: 1, A: 5, C: 1}
	ds := bernoulliData(src, linspace(0, 2, 5), nil, 300, 2)
	var ref []*Curve
	for _, threads := range []int{1, 3} {
		res, err := Run(context.Background(), []density.Source{src}, ds, Config{Refine: 3, ModelSamples: 200, Bootstrap: 10, Threads: threads, Seed: 4})
		if err != nil {
			t.Fatal(err)
		}
		if ref == nil {
			ref = res.Curves
			continue
		}
		for i, c := range res.Curves {
			for j := range c.Val {
				if c.Val[j] != ref[i].Val[j] || c.Err[j] != ref[i].Err[j] {
					t.Fatalf("%s at %v: %v ± %v with %d threads, %v ± %v with 1", c.Name, c.Pos[j], c.Val[j], c.Err[j], threads, ref[i].Val[j], ref[i].Err[j])
				}
			}
		}
	}
}

// TestFisherDerivReadsTheData checks which snapshots fisher_deriv averages
// over: on the data's own grid the data's, elsewhere (refined) the source's
// samples. A source with its sites' probability p_b scored on data whose
// sites are 1 with probability p_a has ∂_λ log p_b = A Σ_i (x_i − p_b), so
// E_a[(∂_λ log p_b)²] = A² [N p_a(1−p_a) + N² (p_a−p_b)²] (variance plus
// squared mean of a binomial sum; common practice), while its own Fisher
// information is N A² p_b(1−p_b).
func TestFisherDerivReadsTheData(t *testing.T) {
	a := &densitytest.Logistic{N: 16, D: 1, A: 4, C: 1.0}
	b := &densitytest.Logistic{N: 16, D: 1, A: 4, C: 1.2}
	ds := bernoulliData(a, linspace(0, 2, 11), nil, 2000, 5)
	for _, tc := range []struct {
		name   string
		refine int
		want   func(n, pa, pb float64) float64
	}{
		{"data grid", 1, func(n, pa, pb float64) float64 { return n*pa*(1-pa) + n*n*(pa-pb)*(pa-pb) }},
		{"refined", 2, func(n, pa, pb float64) float64 { return n * pb * (1 - pb) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := Config{Bootstrap: 20, Threads: 2, Seed: 7, ModelSamples: 2000, Refine: tc.refine, Indicators: []string{Fisher}}
			res, err := Run(context.Background(), []density.Source{b}, ds, cfg)
			if err != nil {
				t.Fatal(err)
			}
			fd := curveByName(t, res.Curves, "fisher_deriv")
			for i, p := range fd.Pos {
				want := b.A * b.A * tc.want(float64(b.N), a.P(p), b.P(p))
				if d := math.Abs(fd.Val[i] - want); d > 5*fd.Err[i]+1e-9 {
					t.Errorf("fisher_deriv at %v: %.4g ± %.2g, closed form %.4g", p, fd.Val[i], fd.Err[i], want)
				}
			}
		})
	}
}
