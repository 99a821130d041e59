package indicator

import (
	"context"
	"math"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// meanErr runs a bootstrap scan of product-Bernoulli data with per samples
// per point and returns the mean standard error of each curve.
func meanErr(t *testing.T, per int) map[string]float64 {
	src := &densitytest.Logistic{N: 8, D: 1, A: 2, C: 1}
	ds := bernoulliData(src, linspace(0, 2, 9), nil, per, 3)
	res, err := Run(context.Background(), []density.Source{src}, ds, Config{Bootstrap: 200, Threads: 2, Seed: 5, ModelSamples: per})
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]float64{}
	for _, c := range res.Curves {
		s := 0.0
		for _, e := range c.Err {
			s += e
		}
		out[c.Name] = s / float64(len(c.Err))
	}
	return out
}

func TestBootstrapErrorsShrinkAsOneOverRootN(t *testing.T) {
	small, large := meanErr(t, 100), meanErr(t, 1600)
	// 16 times more samples: errors ÷ 4 (the central limit theorem: common
	// practice); bootstrap noise of 200 replicates allows ±25%.
	for name, e := range small {
		r := e / large[name]
		if e == 0 || r < 3 || r > 5.3 {
			t.Errorf("%s: error %.4g at n=100, %.4g at n=1600, ratio %.2f, want ≈ 4", name, e, large[name], r)
		}
	}
}

func TestHistogramAgreesWithExact(t *testing.T) {
	// 4 sites: 16 states, well sampled by 1000 snapshots a point.
	src := &densitytest.Logistic{N: 4, D: 1, A: 3, C: 1}
	ds := bernoulliData(src, linspace(0.2, 1.8, 9), nil, 1000, 11)
	h, err := density.NewHistogram(ds)
	if err != nil {
		t.Fatal(err)
	}
	cfg := Config{Bootstrap: 100, Threads: 2, Seed: 2, Indicators: []string{LBC, SL, PBM, Local, Fisher}}
	rh, err := Run(context.Background(), []density.Source{h}, ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	re, err := Run(context.Background(), []density.Source{src}, ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	for _, ch := range rh.Curves {
		ce := curveByName(t, re.Curves, ch.Name)
		for i := range ch.Val {
			tol := 3 * math.Hypot(ch.Err[i], ce.Err[i])
			if d := math.Abs(ch.Val[i] - ce.Val[i]); d > tol {
				t.Errorf("%s at %v: histogram %.5g ± %.2g, exact %.5g ± %.2g", ch.Name, ch.Pos[i], ch.Val[i], ch.Err[i], ce.Val[i], ce.Err[i])
			}
		}
	}
}

func TestHistogramRefusals(t *testing.T) {
	src := &densitytest.Logistic{N: 12, D: 1, A: 1, C: 1}
	ds := bernoulliData(src, linspace(0, 2, 3), nil, 200, 1)
	if _, err := density.NewHistogram(ds); err == nil {
		t.Fatal("histogram of 4096 states from 200 samples accepted")
	}
	small := bernoulliData(&densitytest.Logistic{N: 2, D: 1, A: 1, C: 1}, linspace(0, 2, 3), nil, 100, 1)
	h, err := density.NewHistogram(small)
	if err != nil {
		t.Fatal(err)
	}
	dst := make([]float64, 1)
	if err := h.LogProb(dst, []uint8{0, 1}, []float64{0.5}); err == nil {
		t.Error("histogram evaluated off the grid")
	}
	if err := h.LogProb(dst, []uint8{0, 1}, []float64{1}); err != nil || dst[0] > 0 {
		t.Errorf("on the grid: %v %v", dst, err)
	}
}
