package train

import (
	"context"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/model"
)

// ising4x4Fixture is the model of TestIsingAgainstEnumeration, trained once
// and shared with the indicator comparison.
type ising4x4Fixture struct {
	temps []float64
	ds    *data.Dataset
	src   *ising.Source
	ck    *checkpoints.Checkpoint
	m     *model.Model
	err   error
}

var (
	ising4x4Once sync.Once
	ising4x4Fx   ising4x4Fixture
)

// ising4x4 trains (once per test binary), with the default settings, on
// exact samples of the 4×4 periodic Ising model at 12 temperatures in
// [1, 4], two held out.
func ising4x4(t *testing.T) *ising4x4Fixture {
	ising4x4Once.Do(func() {
		fx := &ising4x4Fx
		fx.temps = linspace(1, 4, 12)
		fx.ds, fx.src = isingDataset(t, 4, 4, fx.temps, isingPerPoint, 11)
		st := DefaultSettings()
		st.Epochs = isingEpochs
		st.Augment = isingSymmetries
		st.Average = isingAverage
		fx.ck, fx.err = Run(context.Background(), fx.ds, Options{Settings: st, Holdout: "T=2.0909090909;2.6363636364"})
		if fx.err == nil {
			fx.m, fx.err = fx.ck.Model()
		}
	})
	return &ising4x4Fx
}

// isingDataset draws exact i.i.d. samples of the periodic Ly×Lx Ising model
// (Jx = Jy = 1, h = 0) at each temperature, perPoint at each.
func isingDataset(t testing.TB, ly, lx int, temps []float64, perPoint int, seed uint64) (*data.Dataset, *ising.Source) {
	t.Helper()
	lat := ising.Lattice{Ly: ly, Lx: lx}
	src, err := ising.NewSource(lat, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	n := lat.N()
	ds, err := data.New(len(temps)*perPoint, n, []string{"T"}, 2, []int{ly, lx}, map[string]any{"generator": "test-exact-ising"})
	if err != nil {
		t.Fatal(err)
	}
	for k, T := range temps {
		rng := rand.New(rand.NewPCG(seed, uint64(k)))
		src.Enumeration().Sample(ds.States[k*perPoint*n:(k+1)*perPoint*n], perPoint, ising.Couplings{T: T, Jx: 1, Jy: 1}, rng)
		for i := 0; i < perPoint; i++ {
			ds.Params[k*perPoint+i] = T
		}
	}
	return ds, src
}

func linspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return v
}

// TestIsingAgainstEnumeration trains on exact samples of the 4×4 periodic
// Ising model at 12 temperatures in [1, 4], two of them held out on either
// side of the critical temperature T_c = 2/ln(1+√2) ≈ 2.269 (L. Onsager,
// Phys. Rev. 65, 117 (1944)), and compares the model with exact enumeration
// of all 2^16 states.
func TestIsingAgainstEnumeration(t *testing.T) {
	fx := ising4x4(t)
	temps, src, ck, m, err := fx.temps, fx.src, fx.ck, fx.m, fx.err
	if err != nil {
		t.Fatal(err)
	}
	h := ck.Header
	t.Logf("best epoch %d of %d (%s), val %.4f bits/site, %.0f samples/s", h.BestEpoch, len(h.Metrics), h.Stopped, h.BestValBitsPerSite, h.Metrics[len(h.Metrics)-1].SamplesPerS)
	if len(h.HeldOut) != 2 {
		t.Fatalf("held out %v, want 2 points", h.HeldOut)
	}
	held := map[float64]bool{}
	for _, p := range h.HeldOut {
		held[p[0]] = true
	}
	var maxTrain, maxHeld, sumTrain float64
	for _, T := range temps {
		d, err := density.ExhaustiveDivergence(src, m, []float64{T}, 2, nil)
		if err != nil {
			t.Fatal(err)
		}
		kl := d.KL / 16
		t.Logf("T=%.4f held=%v KL/site=%.5f TV=%.4f H/site=%.4f mass=%.6f", T, held[T], kl, d.TV, d.Entropy/16, d.ModelMass)
		if math.Abs(d.ModelMass-1) > 1e-9 || math.Abs(d.ExactMass-1) > 1e-9 {
			t.Errorf("T=%v: probabilities sum to %v (model) and %v (exact), want 1", T, d.ModelMass, d.ExactMass)
		}
		if held[T] {
			maxHeld = math.Max(maxHeld, kl)
		} else {
			maxTrain = math.Max(maxTrain, kl)
			sumTrain += kl
		}
	}
	t.Logf("max KL/site: trained %.5f, held out %.5f; mean trained %.5f", maxTrain, maxHeld, sumTrain/10)
	// Thresholds from the task: 0.01 nats per site at trained points, 0.02 at held-out ones.
	if maxTrain > 0.01 {
		t.Errorf("KL per site at trained points up to %.4f nats, want ≤ 0.01", maxTrain)
	}
	if maxHeld > 0.02 {
		t.Errorf("KL per site at held-out points up to %.4f nats, want ≤ 0.02", maxHeld)
	}
}

var (
	isingPerPoint = 4000
	isingEpochs   = 30
	// isingSymmetries is the symmetry group of the isotropic periodic Ising
	// model at zero field, which the training snapshots are augmented with
	// (what a user declares with train --augment).
	isingSymmetries = []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate, density.SymFlip}
	// isingAverage is the time constant in epochs of the weight average the
	// model is kept as (train --average): with 4000 snapshots of 16 sites
	// per point the data pin the model down and the minibatch noise of the
	// last steps is what averaging removes (see Settings.Average).
	isingAverage = 4.0
)

// randomDataset fills an ly×lx dataset with uniformly random spins at k
// temperatures, for benchmarks (the values do not matter for timing).
func randomDataset(t testing.TB, ly, lx, k, per int) *data.Dataset {
	t.Helper()
	n := ly * lx
	ds, err := data.New(k*per, n, []string{"T"}, 2, []int{ly, lx}, map[string]any{"generator": "test-random"})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := range ds.States {
		ds.States[i] = uint8(rng.IntN(2))
	}
	for i := range ds.Params {
		ds.Params[i] = 1 + float64(i/per)*0.1
	}
	return ds
}
