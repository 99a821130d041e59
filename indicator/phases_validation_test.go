//go:build validation

package indicator_test

import (
	"context"
	"math"
	"testing"
	"time"

	"tidemark/data"
	"tidemark/data/chain"
	"tidemark/indicator"
)

// xyDataset simulates the open XY chain in a transverse field,
// H = −Σ[(1+γ)/2 X_iX_{i+1} + (1−γ)/2 Y_iY_{i+1}] − h Σ Z_i, with the MPS
// solver over the product grid γ × h, random Pauli basis.
func xyDataset(t *testing.T, n int, gs, hs []float64, shots int) (*chain.MPSSource, *data.Dataset) {
	t.Helper()
	cfg := chain.Config{Sites: n, Hamiltonian: "-0.5*XX - 0.5*g*XX - 0.5*YY + 0.5*g*YY - h*Z", Params: []string{"g", "h"}, Open: true, Basis: chain.BasisRandom}
	src, err := chain.NewMPS(cfg, chain.MPSOptions{MaxBond: 32}, 7)
	if err != nil {
		t.Fatal(err)
	}
	var pts [][]float64
	for _, g := range gs {
		for _, h := range hs {
			pts = append(pts, []float64{g, h})
		}
	}
	t0 := time.Now()
	sim, err := chain.SimulateMPS(context.Background(), src, pts, shots, 11, 2, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("simulated %d points × %d shots of N=%d in %v", len(pts), shots, n, time.Since(t0))
	ds, err := data.New(len(pts)*shots, n, []string{"g", "h"}, 6, nil, map[string]any{"generator": "test-xy"})
	if err != nil {
		t.Fatal(err)
	}
	copy(ds.States, sim.States)
	copy(ds.Params, sim.Params)
	return src, ds
}

// TestXYChainThreePhases checks the phase diagram of the XY chain in a
// transverse field against its exact lines (E. Barouch and B. M. McCoy,
// Phys. Rev. A 3, 786 (1971)): three phases — ordered along X (γ > 0,
// |h| < 1), ordered along Y (γ < 0, |h| < 1) and the paramagnet (|h| > 1) —
// separated by the Ising line h = 1 and the anisotropy line γ = 0 (|h| < 1).
// The scan uses the exact density (the MPS) on sampled snapshots; the mean
// distance of the boundary points from the nearest exact line must be at
// most 5% of the axis range.
func TestXYChainThreePhases(t *testing.T) {
	gs := linspace(-1, 1, 9)
	hs := linspace(0.2, 1.8, 9)
	src, ds := xyDataset(t, 32, gs, hs, 500)
	t0 := time.Now()
	res, err := indicator.Run([]indicator.Source{src}, ds, indicator.Config{Indicators: []string{indicator.Local, indicator.Fisher}, Bootstrap: 20, Threads: 2, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("scan in %v", time.Since(t0))
	if res.Phases == nil {
		t.Fatal("no phase diagram")
	}
	dist := func(p [2]float64) float64 {
		d := math.Abs(p[1]-1) / 1.6 // h = 1, h range 1.6
		if p[1] < 1 {
			d = math.Min(d, math.Abs(p[0])/2) // γ = 0, γ range 2
		}
		return d
	}
	for _, m := range res.Phases.Maps {
		s, n := 0.0, 0
		for _, b := range m.Boundaries {
			for _, p := range b.Points {
				s += dist(p)
				n++
			}
		}
		t.Logf("%s: %d phases, %d boundary points, mean distance %.3g of the range; labels %v", m.Indicator, m.Phases.Count, n, s/float64(max(n, 1)), m.Phases.Labels)
		if m.Indicator != indicator.Fisher {
			continue
		}
		if m.Phases.Count != 3 {
			t.Errorf("fisher: %d phases, want 3 (Barouch & McCoy 1971)", m.Phases.Count)
		}
		if n == 0 || s/float64(n) > 0.05 {
			t.Errorf("fisher: mean distance %.3g of the axis range from the exact lines, want ≤ 0.05", s/float64(max(n, 1)))
		}
	}
}
