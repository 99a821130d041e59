package train

import (
	"math"
	"testing"

	"tidemark/indicator"
)

// TestModelIndicatorsMatchExact scans the model of TestIsingAgainstEnumeration
// and the exact 4×4 enumeration (the reference; P. D. Beale, Phys. Rev. Lett.
// 76, 78 (1996) checks the enumeration itself) on the same evaluation
// snapshots at the 12 grid points (two of them held out in training), and
// requires the global indicators' curves (sl, lbc, pbm) to stay within 5% of
// the exact curve's range and their highest peak within one grid step of the
// exact one.
//
// The neighbour-comparing indicators do not meet that bar with this model
// and are only logged: on 2026-12-01 local differed from exact by 0.37 of its
// range, fisher by 0.66 and fisher_deriv by 1.55 (their peaks at T = 1.96,
// 2.16 and 2.71 against 2.20, 2.17 and 2.15). The model's total-variation
// distance from the exact distribution at each point (about 0.1, see check)
// is as large as the distance between neighbouring points that local
// measures; a scan on a refined grid with model samples is worse still
// (sl and pbm 0.7 of their range). Variants tried (tanh conditioning,
// F = 0) improved fisher to 0.26 at best.
func TestModelIndicatorsMatchExact(t *testing.T) {
	if testing.Short() {
		t.Skip("trains a model")
	}
	fx := ising4x4(t)
	if fx.err != nil {
		t.Fatal(fx.err)
	}
	step := fx.temps[1] - fx.temps[0]
	for _, tc := range []struct {
		name   string
		refine int
		// exactSums: the exact reference uses exact expectations; the model
		// is then evaluated on its own samples (refined grids), so the
		// comparison includes the model's sampling noise.
		exactSums bool
		tol       float64
	}{
		{"grid points, data snapshots", 1, false, 0.05},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := indicator.Config{Refine: tc.refine, ModelSamples: 4000, Threads: 2, Seed: 5}
			mres, err := indicator.Run([]indicator.Source{fx.m}, fx.ds, cfg)
			if err != nil {
				t.Fatal(err)
			}
			cfg.ExactSums = tc.exactSums
			eres, err := indicator.Run([]indicator.Source{fx.src}, fx.ds, cfg)
			if err != nil {
				t.Fatal(err)
			}
			exact := map[string]*indicator.Curve{}
			for _, c := range eres.Curves {
				exact[c.Name] = c
			}
			for _, mc := range mres.Curves {
				ec := exact[mc.Name]
				if ec == nil || len(ec.Val) != len(mc.Val) {
					t.Errorf("%s: no exact curve of the same length", mc.Name)
					continue
				}
				lo, hi := math.Inf(1), math.Inf(-1)
				for _, v := range ec.Val {
					if !math.IsNaN(v) {
						lo, hi = math.Min(lo, v), math.Max(hi, v)
					}
				}
				worst, at := 0.0, 0.0
				for i := range mc.Val {
					if math.IsNaN(mc.Val[i]) || math.IsNaN(ec.Val[i]) {
						continue
					}
					if d := math.Abs(mc.Val[i] - ec.Val[i]); d > worst {
						worst, at = d, mc.Pos[i][0]
					}
				}
				rel := worst / (hi - lo)
				mp, ep := highest(mc), highest(ec)
				t.Logf("%-13s worst |model−exact| %.3f of the range (at T=%.3f); highest peak %.4f, exact %.4f", mc.Name, rel, at, mp, ep)
				if !globalIndicator[mc.Indicator] {
					continue // logged only; see the comment above
				}
				if rel > tc.tol {
					t.Errorf("%s: model curve differs from exact by %.3f of its range at T=%.3f, want ≤ %.2f", mc.Name, rel, at, tc.tol)
				}
				if math.Abs(mp-ep) > step {
					t.Errorf("%s: highest peak at T=%.4f, exact %.4f: more than one grid step (%.3f) apart", mc.Name, mp, ep, step)
				}
			}
		})
	}
}

// globalIndicator lists the indicators the test holds to the exact curve.
var globalIndicator = map[string]bool{"sl": true, "lbc": true, "pbm": true}

// highest returns the position of a curve's highest peak, or of its maximum
// when no peak was found.
func highest(c *indicator.Curve) float64 {
	best, pos := math.Inf(-1), math.NaN()
	for _, p := range c.Peaks {
		if p.Height > best {
			best, pos = p.Height, p.At[0]
		}
	}
	if !math.IsNaN(pos) {
		return pos
	}
	for i, v := range c.Val {
		if v > best {
			best, pos = v, c.Pos[i][0]
		}
	}
	return pos
}
