//go:build validation

package indicator_test

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
)

// TestBootstrapCalibratedOnIsing checks that the bootstrap errors of a
// sampled scan are honest: on exact samples of the 4×4 Ising model, the
// sampled curves should lie within 2 standard errors of the exact-sum
// curves at about 95% of positions (normal errors: common practice); we ask
// for 80% to leave room for the small bias of finite samples.
func TestBootstrapCalibratedOnIsing(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	ts := linspace(1.5, 3.5, 11)
	per := 2000
	ds, err := data.New(len(ts)*per, 16, []string{"T"}, 2, []int{4, 4}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for k, T := range ts {
		rng := rand.New(rand.NewPCG(21, uint64(k)))
		if err := src.Sample(ds.States[k*per*16:(k+1)*per*16], per, []float64{T}, rng); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < per; i++ {
			ds.Params[k*per+i] = T
		}
	}
	ex, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	sm, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{Bootstrap: 200, Threads: 2, Seed: 8, ModelSamples: per})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range sm.Curves {
		ce := curveByName(t, ex.Curves, c.Name)
		in := 0
		for i := range c.Val {
			if math.Abs(c.Val[i]-ce.Val[i]) <= 2*c.Err[i] {
				in++
			}
		}
		frac := float64(in) / float64(len(c.Val))
		t.Logf("%s: %d of %d within 2σ", c.Name, in, len(c.Val))
		if frac < 0.8 {
			t.Errorf("%s: only %d of %d positions within 2 bootstrap errors of the exact sums", c.Name, in, len(c.Val))
		}
	}
	// The sampled fisher_deriv peak agrees with Beale's within 3 errors.
	fd := curveByName(t, sm.Curves, "fisher_deriv")
	if len(fd.Peaks) == 0 || math.Abs(fd.Peaks[0].At[0]-bealePeak()) > 3*fd.Peaks[0].Err[0]+0.02 {
		t.Errorf("fisher_deriv peaks %+v, Beale %.4f", fd.Peaks, bealePeak())
	}
}
