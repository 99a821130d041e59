package indicator

import (
	"context"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/check"
	"tidemark/model"
)

// streamedPair returns a dataset in memory and the same dataset read by
// data.ReadHead (states left in its file), with more snapshots than
// data.BlockRows so that the blocks split a grid point, and a model (random
// weights: only agreement matters here) with every earlier site.
func streamedPair(t *testing.T, precision string) (mem, head *data.Dataset, src density.Source) {
	t.Helper()
	temps := []float64{2, 2.2, 2.4, 2.6, 2.8}
	per := data.BlockRows/len(temps) + 900
	ds, err := data.New(per*len(temps), 16, []string{"T"}, 2, []int{4, 4}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(11, 5))
	for i := range ds.States {
		ds.States[i] = uint8(rng.IntN(2))
	}
	for m := range ds.M {
		ds.Params[m] = temps[m/per]
	}
	path := filepath.Join(t.TempDir(), "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	if head, err = data.ReadHead(path, data.ReadOptions{}); err != nil {
		t.Fatal(err)
	}
	cfg := model.DefaultConfig(16, 2, 1, []float64{2}, []float64{2.8})
	cfg.Hidden = []int{32}
	cfg.Precision = precision
	mdl, err := model.New(cfg, 5)
	if err != nil {
		t.Fatal(err)
	}
	return ds, head, mdl
}

// A scan of a dataset whose states stay in its file (read block by block:
// the log-likelihood matrix, ∂λ log p for fisher_deriv) gives the scan of
// the same dataset in memory bit for bit: every curve, error and peak,
// with the bootstrap and the check on unseen snapshots.
func TestScanStreamedMatchesInMemory(t *testing.T) {
	for _, precision := range []string{model.PrecisionFloat32, model.PrecisionFloat64} {
		mem, head, src := streamedPair(t, precision)
		unseen := make([]bool, mem.M)
		for m := range unseen {
			unseen[m] = m%3 == 0
		}
		cfg := Config{Indicators: slices.Clone(AllIndicators), Bootstrap: 8, Refine: 1, ModelSamples: 50, Seed: 3, Unseen: unseen, Threads: 2}
		want, err := Run(context.Background(), []density.Source{src}, mem, cfg)
		if err != nil {
			t.Fatal(err)
		}
		cfg.KeepDataLogLik = true
		got, err := Run(context.Background(), []density.Source{src}, head, cfg)
		if err != nil {
			t.Fatal(err)
		}
		if len(got.Curves) != len(want.Curves) || len(want.Curves) < 6 {
			t.Fatalf("%s: %d curves streamed, %d in memory", precision, len(got.Curves), len(want.Curves))
		}
		for c, w := range want.Curves {
			g := got.Curves[c]
			if g.Name != w.Name || !slices.Equal(g.Val, w.Val) || !slices.Equal(g.Err, w.Err) || len(g.Peaks) != len(w.Peaks) {
				t.Errorf("%s %s: streamed %v ± %v, in memory %v ± %v", precision, w.Name, g.Val, g.Err, w.Val, w.Err)
				continue
			}
			for i := range w.Peaks {
				if g.Peaks[i].At[0] != w.Peaks[i].At[0] || g.Peaks[i].Err[0] != w.Peaks[i].Err[0] {
					t.Errorf("%s %s peak %d: streamed %+v, in memory %+v", precision, w.Name, i, g.Peaks[i], w.Peaks[i])
				}
			}
		}
		if !slices.Equal(got.Notes, want.Notes) || got.UnseenChecked != want.UnseenChecked {
			t.Errorf("%s: notes or unseen check differ:\n%q\n%q", precision, got.Notes, want.Notes)
		}
		// The response measurement reads the snapshots block by block too.
		rw, err := check.MeasureResponse(src, src, mem)
		if err != nil {
			t.Fatal(err)
		}
		rg, err := check.MeasureResponse(src, src, head)
		if err != nil {
			t.Fatal(err)
		}
		if len(rw.Pairs) != 4 || rg.Median != rw.Median || rg.Min != rw.Min || rg.Max != rw.Max {
			t.Errorf("%s: response streamed %+v, in memory %+v", precision, rg, rw)
		}
		// With the scan's log-likelihoods in place of the model's own.
		if want.DataLogLik(0) != nil || got.DataLogLik(0) == nil {
			t.Fatal("KeepDataLogLik did not decide whether the scan kept its matrix")
		}
		rk, err := check.MeasureResponseKnown(src, src, head, got.DataLogLik(0))
		if err != nil {
			t.Fatal(err)
		}
		for i, p := range rw.Pairs {
			if q := rk.Pairs[i]; math.Abs(q.Slope-p.Slope) > 1e-9 || q.Samples != p.Samples {
				t.Errorf("%s pair %d: slope %v from the scan's log-likelihoods, %v from the model's", precision, i, q.Slope, p.Slope)
			}
		}
	}
}
