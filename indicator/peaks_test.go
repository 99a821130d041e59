package indicator

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestParabolaRefinesPeak(t *testing.T) {
	tests := []struct {
		name string
		f    func(x float64) float64
		peak float64
		tol  float64
	}{
		// A parabola is recovered exactly.
		{"parabola", func(x float64) float64 { return 3 - 2*(x-0.537)*(x-0.537) }, 0.537, 1e-12},
		// A Gaussian of width 3 grid steps: the three-point parabola is
		// accurate to a small fraction of a step (common practice).
		{"gaussian", func(x float64) float64 { return math.Exp(-(x - 0.537) * (x - 0.537) / (2 * 0.3 * 0.3)) }, 0.537, 0.01},
		// A Lorentzian peak, off-centre between samples.
		{"lorentzian", func(x float64) float64 { return 1 / (1 + (x-1.234)*(x-1.234)/0.04) }, 1.234, 0.02},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := &Curve{Lines: []Line{{Axis: 0}}}
			for i, x := range linspace(-1, 3, 41) {
				c.Pos = append(c.Pos, []float64{x})
				c.Val = append(c.Val, tc.f(x))
				c.Err = append(c.Err, 0)
				c.Lines[0].Idx = append(c.Lines[0].Idx, i)
			}
			findPeaks(c, nil, nil, true, nil)
			if len(c.Peaks) != 1 {
				t.Fatalf("peaks %+v, want 1", c.Peaks)
			}
			if d := math.Abs(c.Peaks[0].At[0] - tc.peak); d > tc.tol {
				t.Errorf("peak at %.6f, want %.6f", c.Peaks[0].At[0], tc.peak)
			}
		})
	}
}

func TestPeaksAboveNoise(t *testing.T) {
	// Two bumps: one of prominence 1, one of 0.05; with errors 0.1 only the
	// first stands more than 2 errors above its neighbouring minimum.
	xs := linspace(0, 10, 101)
	c := &Curve{Lines: []Line{{Axis: 0}}}
	for i, x := range xs {
		v := math.Exp(-(x-3)*(x-3)) + 0.05*math.Exp(-(x-7)*(x-7)/0.5)
		c.Pos = append(c.Pos, []float64{x})
		c.Val = append(c.Val, v)
		c.Err = append(c.Err, 0.1)
		c.Lines[0].Idx = append(c.Lines[0].Idx, i)
	}
	findPeaks(c, nil, nil, true, nil)
	if len(c.Peaks) != 1 || math.Abs(c.Peaks[0].At[0]-3) > 0.01 {
		t.Errorf("tested peaks %+v, want one at 3", c.Peaks)
	}
	findPeaks(c, nil, nil, false, nil)
	if len(c.Peaks) != 2 {
		t.Errorf("untested peaks %+v, want both maxima", c.Peaks)
	}
}

// TestHighestPeakErrorCoversRivalMaxima checks that the highest peak's
// error grows when a rival maximum of nearly the same height takes the
// lead in some bootstrap replicates: two bumps 0.3 apart, the right one
// higher by half a replicate's noise, so that about a third of the
// replicates put the highest maximum on the left one and the spread is
// about half their distance. With the rival far lower the error stays that
// of the one maximum.
func TestHighestPeakErrorCoversRivalMaxima(t *testing.T) {
	for _, tc := range []struct {
		name           string
		rival          float64 // height of the left bump relative to the right one
		wantLo, wantHi float64
	}{
		{"rival of nearly equal height", 0.995, 0.08, 0.2},
		{"rival far lower", 0.5, 0, 0.02},
	} {
		t.Run(tc.name, func(t *testing.T) {
			xs := linspace(0, 1, 21)
			f := func(x float64) float64 {
				return tc.rival*math.Exp(-(x-0.35)*(x-0.35)/0.005) + math.Exp(-(x-0.65)*(x-0.65)/0.005)
			}
			c := &Curve{Lines: []Line{{Axis: 0}}}
			for i, x := range xs {
				c.Pos = append(c.Pos, []float64{x})
				c.Val = append(c.Val, f(x))
				c.Lines[0].Idx = append(c.Lines[0].Idx, i)
			}
			rng := rand.New(rand.NewPCG(1, 2))
			var reps [][]float64
			for b := 0; b < 200; b++ {
				r := make([]float64, len(xs))
				for i, x := range xs {
					r[i] = f(x) + 0.01*rng.NormFloat64()
				}
				reps = append(reps, r)
			}
			c.Err = make([]float64, len(xs))
			for i := range c.Err {
				c.Err[i] = 0.01
			}
			findPeaks(c, reps, nil, true, nil)
			var top *Peak
			for i := range c.Peaks {
				if top == nil || c.Peaks[i].Height > top.Height {
					top = &c.Peaks[i]
				}
			}
			if top == nil || math.Abs(top.At[0]-0.65) > 0.02 {
				t.Fatalf("highest peak %+v, want one at 0.65", top)
			}
			if e := top.Err[0]; e < tc.wantLo || e > tc.wantHi {
				t.Errorf("highest peak's error %.4f, want it in [%v, %v]", e, tc.wantLo, tc.wantHi)
			}
		})
	}
}
