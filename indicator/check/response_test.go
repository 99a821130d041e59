package check

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
)

// tempered is the exact Ising density read at a scaled temperature,
// q(x|T) = p(x|s·T): since log p(x|T) = −E(x)/T − log Z(T) (the Boltzmann
// form, common practice), log q(x|b) − log q(x|a) equals
// (log p(x|b) − log p(x|a))/s plus a constant, so its response slope is
// exactly 1/s on any snapshots.
type tempered struct {
	density.Source
	s float64
}

func (t tempered) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	return t.Source.LogProb(dst, xs, []float64{lambda[0] * t.s})
}

// exactDataset draws n exact samples of the 3×3 Ising model at each T,
// from the random stream seeded (seed1, seed2).
func exactDataset(t *testing.T, src *ising.Source, n int, ts []float64, seed1, seed2 uint64) *data.Dataset {
	t.Helper()
	ds, err := data.New(n*len(ts), 9, []string{"T"}, 2, []int{3, 3}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed1, seed2))
	for k, T := range ts {
		if err := src.Sample(ds.States[k*n*9:], n, []float64{T}, rng); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < n; i++ {
			ds.Params[k*n+i] = T
		}
	}
	return ds
}

// TestResponseOfTemperedExactDensity measures the response of the exact
// 3×3 Ising density read at s·T against itself: every pair's slope must be
// 1/s to rounding, with R² = 1, and the caution must appear exactly when
// the median is below 0.9 (reading low) or above 1.1 (reading high), in
// check's section and in the scan's one-line note.
func TestResponseOfTemperedExactDensity(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 3, Lx: 3}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	ds := exactDataset(t, src, 300, []float64{2, 2.5, 3, 3.5}, 3, 4)
	for _, tc := range []struct {
		s       float64
		caution string
	}{{1, ""}, {1.25, "changes more slowly"}, {0.8, "changes faster"}, {1.05, ""}} {
		rep, err := MeasureResponse(tempered{src, tc.s}, src, ds)
		if err != nil {
			t.Fatal(err)
		}
		if rep == nil || len(rep.Pairs) != 3 {
			t.Fatalf("s=%v: response %+v, want 3 pairs", tc.s, rep)
		}
		for _, p := range rep.Pairs {
			if math.Abs(p.Slope-1/tc.s) > 1e-9 || math.Abs(p.R2-1) > 1e-9 || p.StdErr > 1e-6 || p.Samples != 600 {
				t.Errorf("s=%v %s→%s: slope %v ± %v, R² %v, %d samples; want %v, R² 1, 600", tc.s, p.From, p.To, p.Slope, p.StdErr, p.R2, p.Samples, 1/tc.s)
			}
		}
		if math.Abs(rep.Median-1/tc.s) > 1e-9 {
			t.Errorf("s=%v: median %v, want %v", tc.s, rep.Median, 1/tc.s)
		}
		var b strings.Builder
		if err := rep.writeText(&b); err != nil {
			t.Fatal(err)
		}
		note := rep.Note()
		for what, text := range map[string]string{"check": b.String(), "note": note} {
			got := strings.Contains(text, "caution: the model's density") || strings.Contains(text, "; the model's density")
			if got != (tc.caution != "") || (got && !strings.Contains(text, tc.caution)) {
				t.Errorf("s=%v %s: want caution %q:\n%s", tc.s, what, tc.caution, text)
			}
		}
		if want := fmt.Sprintf("median slope %.2f", 1/tc.s); !strings.Contains(note, want) || strings.Contains(note, "\n") {
			t.Errorf("s=%v: note %q, want one line with %q", tc.s, note, want)
		}
	}
}
