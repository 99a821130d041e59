package check

import (
	"math"
	"testing"

	"tidemark/data/ising"
)

// TestEnumerateExactAgainstItself compares the exact 3×3 Ising density
// with itself: KL and TV must vanish (to rounding) at the grid points and
// at a held-out point, and NLL − H, an estimate of KL from 400 exact
// samples, must lie within four of its standard errors of zero.
func TestEnumerateExactAgainstItself(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 3, Lx: 3}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	const n = 400
	ds := exactDataset(t, src, n, []float64{2, 3}, 1, 2)
	rep, err := Enumerate(src, src, ds, [][]float64{{2.5}, {3}}, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Points) != 3 || !rep.Points[1].HeldOut || !rep.Points[2].HeldOut || rep.Points[2].Samples != 0 {
		t.Fatalf("points %+v", rep.Points)
	}
	for _, p := range rep.Points {
		if p.KLPerSite == nil || math.Abs(*p.KLPerSite) > 1e-12 || p.TV > 1e-12 {
			t.Errorf("%s: KL %v, TV %v; want 0", p.Label, p.KLPerSite, p.TV)
		}
	}
	for _, p := range rep.Points[:2] {
		lp := make([]float64, 1)
		var s, s2 float64
		for r := 0; r < ds.M; r++ {
			if ds.Params[r] != p.Params[0] {
				continue
			}
			if err := src.LogProb(lp, ds.Row(r), p.Params); err != nil {
				t.Fatal(err)
			}
			s -= lp[0] / 9
			s2 += lp[0] * lp[0] / 81
		}
		se := math.Sqrt((s2/n - (s/n)*(s/n)) / n)
		if p.StdErr == nil || math.Abs(*p.StdErr-se*math.Sqrt(n/(n-1.0))) > 1e-9 {
			t.Errorf("%s: standard error %v, want %v", p.Label, p.StdErr, se*math.Sqrt(n/(n-1.0)))
		}
		if d := *p.NLLMinusEntropy; math.Abs(d) > 4*se {
			t.Errorf("%s: NLL − H = %v per site, more than 4 standard errors (%v) from 0", p.Label, d, se)
		}
	}
}
