package train

import (
	"context"
	"math"
	"testing"

	"tidemark/data"
)

// TestNLLStats checks the validation pass's mean and standard error against
// a direct computation: every snapshot scored on its own, the mean of
// −log p/N, and the standard error s/√n with the sample standard deviation
// s² = Σ(x − x̄)²/(n − 1) (common practice). Neither may depend on threads.
func TestNLLStats(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 60, 5)
	st := smallSettings()
	st.Epochs = 1
	ck, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	m, err := ck.Model()
	if err != nil {
		t.Fatal(err)
	}
	g := data.NewGrid(ds)
	var x []float64
	for k, idx := range g.Index {
		for _, s := range idx {
			lp := make([]float64, 1)
			if err := m.LogProb(lp, ds.Row(s), g.Points[k]); err != nil {
				t.Fatal(err)
			}
			x = append(x, -lp[0]/float64(ds.N))
		}
	}
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	ss := 0.0
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	se := math.Sqrt(ss/float64(len(x)-1)) / math.Sqrt(float64(len(x)))
	var first [2]float64
	for i, threads := range []int{1, 3} {
		r := &run{ds: ds, st: Settings{Threads: threads}}
		gotMean, gotSE, err := r.nllStats(g.Index, g.Points, m)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(gotMean-mean) > 1e-12*mean || math.Abs(gotSE-se) > 1e-9*se || !(se > 0) {
			t.Errorf("threads %d: mean %v ± %v, direct %v ± %v", threads, gotMean, gotSE, mean, se)
		}
		if i == 0 {
			first = [2]float64{gotMean, gotSE}
		} else if first != [2]float64{gotMean, gotSE} {
			t.Errorf("threads 1 gave %v, threads 3 %v", first, [2]float64{gotMean, gotSE})
		}
		if v, _ := r.nll(g.Index, g.Points, m); v != gotMean {
			t.Errorf("nll %v, nllStats mean %v", v, gotMean)
		}
	}
	// The run records the error of every epoch's validation NLL and of the
	// best one.
	h := ck.Header
	last := h.Metrics[len(h.Metrics)-1]
	if !(last.ValStdErrBitsPerSite > 0 && last.ValStdErrBitsPerSite < last.ValBitsPerSite) {
		t.Errorf("epoch %d: validation %v ± %v bits/site", last.Epoch, last.ValBitsPerSite, last.ValStdErrBitsPerSite)
	}
	if h.BestValStdErrBitsPerSite != h.Metrics[h.BestEpoch-1].ValStdErrBitsPerSite {
		t.Errorf("best epoch %d: recorded error %v, its epoch's %v", h.BestEpoch, h.BestValStdErrBitsPerSite, h.Metrics[h.BestEpoch-1].ValStdErrBitsPerSite)
	}
}
