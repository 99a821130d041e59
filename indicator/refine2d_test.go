package indicator

import (
	"context"
	"math"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// TestRefineNearRidges checks the 2-D refinement on a worked example with a
// known boundary: N independent sites, each 1 with probability
// logistic(A(T − C − B·J)), whose Fisher metric N A² p(1−p)·(1, −B)(1, −B)ᵀ
// has its largest eigenvalue peak on the line T = C + B·J (common
// practice). The inserted points must lie only on grid edges the boundary
// crosses, on fewer than half the edges of the grid, and the refined
// boundary must lie closer to the exact line than the unrefined one.
func TestRefineNearRidges(t *testing.T) {
	src := &densitytest.Logistic{N: 12, D: 2, A: 8, C: 0.75, B: 0.1}
	xs, ys := linspace(0, 2, 7), linspace(0, 2, 6)
	ds := bernoulliData(src, xs, ys, 400, 5)
	// dist is the distance from the exact line in units of the axis ranges
	// (both 2), measured perpendicular to the line.
	dist := func(p [2]float64) float64 {
		return math.Abs(p[0]-src.C-src.B*p[1]) / 2 / math.Hypot(1, src.B)
	}
	mean := func(res *Result) (float64, int) {
		m := res.Phases.Maps[res.Phases.Primary]
		s, n := 0.0, 0
		for _, b := range m.Boundaries {
			for _, p := range b.Points {
				s += dist(p)
				n++
			}
		}
		return s / float64(max(n, 1)), n
	}
	cfg := Config{Indicators: []string{Fisher}, ModelSamples: 20000, Bootstrap: 10, Threads: 2, Seed: 7}
	run := func(r int) *Result {
		c := cfg
		c.Refine = r
		res, err := Run(context.Background(), []density.Source{src}, ds, c)
		if err != nil {
			t.Fatal(err)
		}
		if res.Phases == nil || res.Phases.Primary < 0 {
			t.Fatal("no phase diagram")
		}
		return res
	}
	coarse, fine := run(1), run(4)
	m := fine.Phases.Maps[fine.Phases.Primary]
	if m.Indicator != Fisher || m.Phases.Count != 2 {
		t.Fatalf("primary map %s with %d phases, want fisher with 2", m.Indicator, m.Phases.Count)
	}
	if len(coarse.Phases.Maps[coarse.Phases.Primary].Refined) != 0 {
		t.Error("an unrefined scan has inserted points")
	}
	edges := (len(xs)-1)*len(ys) + len(xs)*(len(ys)-1)
	if n := len(m.Refined); n == 0 || n%3 != 0 || n/3 > edges/2 {
		t.Errorf("%d inserted points, want 3 on each crossed edge and fewer than half of the %d edges", n, edges)
	}
	h := math.Max(xs[1]-xs[0], ys[1]-ys[0]) / 2 // a spacing in range units
	for i, p := range m.Refined {
		// A point on an edge the line crosses is within one spacing of it.
		if d := dist(p); d > h {
			t.Errorf("inserted point %v is %.3g of the range from the line, more than a grid spacing (%.3g)", p, d, h)
		}
		if !(m.RefinedStrength[i] > 0) {
			t.Errorf("inserted point %v has strength %g", p, m.RefinedStrength[i])
		}
	}
	dc, nc := mean(coarse)
	df, nf := mean(fine)
	t.Logf("boundary points' mean distance from T = %g + %g·J: %.4f of the range on the grid (%d points), %.4f refined (%d points, %d inserted)", src.C, src.B, dc, nc, df, nf, len(m.Refined))
	if !(df < dc) || df > 0.01 {
		t.Errorf("refined mean distance %.4f, want below the grid's %.4f and ≤ 0.01", df, dc)
	}
}
