package indicator

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// curveWithPeak is a 1-D curve −(x − at)² on 17 points in [1.9, 2.7] with
// B replicates of Gaussian noise sd.
func curveWithPeak(at, sd float64, B int, seed uint64) (Curve, []float64, [][]float64) {
	rng := rand.New(rand.NewPCG(seed, 1))
	var c Curve
	ln := Line{Axis: 0}
	for i := 0; i < 17; i++ {
		x := 1.9 + 0.05*float64(i)
		c.Pos = append(c.Pos, []float64{x})
		c.Val = append(c.Val, -(x-at)*(x-at))
		ln.Idx = append(ln.Idx, i)
	}
	c.Lines = []Line{ln}
	reps := make([][]float64, B)
	for b := range reps {
		for _, v := range c.Val {
			reps[b] = append(reps[b], v+sd*rng.NormFloat64())
		}
	}
	return c, c.Val, reps
}

func TestCheckUnseen(t *testing.T) {
	for _, tc := range []struct {
		name           string
		unseenAt       float64
		wantLo, wantHi float64 // bounds on the error added to the peak
		wantFar, noted bool
	}{
		{"same curve", 2.3, 0, 0.01, false, false},
		{"moved by two steps", 2.4, 0.07, 0.13, false, true},
		{"peak elsewhere", 2.62, 0, 1, true, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, _, reps := curveWithPeak(2.3, 0.0005, 100, 1)
			c.Err = make([]float64, len(c.Val))
			findPeaks(&c, reps, nil, true, nil)
			if len(c.Peaks) != 1 {
				t.Fatalf("found %d peaks on the seen curve, want 1", len(c.Peaks))
			}
			before := c.Peaks[0].Err[0]
			_, uval, ureps := curveWithPeak(tc.unseenAt, 0.0015, 100, 2)
			if tc.wantFar {
				// A second, higher bump far from the peak only on the unseen curve.
				for i := range uval {
					x := c.Pos[i][0]
					bump := 0.2 * math.Exp(-(x-2.62)*(x-2.62)/0.002)
					uval[i] += bump
					for b := range ureps {
						ureps[b][i] += bump
					}
				}
			}
			far := checkUnseen(&c, uval, ureps)
			pk := c.Peaks[0]
			if pk.Unseen == nil {
				t.Fatal("no comparison recorded")
			}
			if pk.Unseen.Added < tc.wantLo || pk.Unseen.Added > tc.wantHi {
				t.Errorf("added %.4f to the error (shift %.4f, noise %.4f), want it in [%v, %v]", pk.Unseen.Added, pk.Unseen.Shift, pk.Unseen.Noise, tc.wantLo, tc.wantHi)
			}
			if got := math.Hypot(before, pk.Unseen.Added); math.Abs(pk.Err[0]-got) > 1e-12 {
				t.Errorf("error %.6f, want the bootstrap's %.6f and the added %.6f in quadrature", pk.Err[0], before, pk.Unseen.Added)
			}
			if (len(far) > 0) != tc.wantFar {
				t.Errorf("%d peaks only on the unseen curve, want them: %v", len(far), tc.wantFar)
			}
			c.Name = "lbc"
			notes := unseenNotes([]*Curve{&c}, map[string][]Peak{"lbc": far}, []string{"T"})
			if (len(notes) > 0) != tc.noted || (tc.noted && !strings.Contains(notes[0], "lbc moves")) {
				t.Errorf("notes %q, want one: %v", notes, tc.noted)
			}
		})
	}
}

// TestUnseenNoteOnlyForMaterialShifts checks that a shift beyond the
// unseen curve's noise is noted only when it changes the peak's error.
func TestUnseenNoteOnlyForMaterialShifts(t *testing.T) {
	for _, tc := range []struct {
		name         string
		err, shift   float64
		noise, added float64
		noted        bool
	}{
		{"tiny shift on a broad peak", 0.19, 0.0004, 0, 0.0004, false},
		{"shift as large as the error", 0.01, 0.01, 0, 0.01, true},
		{"shift within the noise", 0.01, 0.01, 0.02, 0, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := Curve{Name: "fisher_deriv", Pos: [][]float64{{2.2}, {2.25}, {2.3}}, Lines: []Line{{Axis: 0, Idx: []int{0, 1, 2}}}}
			err := math.Hypot(tc.err, tc.added)
			c.Peaks = []Peak{{At: []float64{2.25}, Err: []float64{err}, Unseen: &Unseen{At: 2.25 + tc.shift, Shift: tc.shift, Noise: tc.noise, Added: tc.added}}}
			notes := unseenNotes([]*Curve{&c}, nil, []string{"T"})
			if (len(notes) > 0) != tc.noted {
				t.Errorf("notes %q, want one: %v", notes, tc.noted)
			}
		})
	}
}

// TestUnseenNoteSaysWhyNot checks the note of a scan that could not compare
// its curves on unseen snapshots: it names too few of them on the data's
// grid, and stays silent on a refined grid, whose points all read the
// source's own samples.
func TestUnseenNoteSaysWhyNot(t *testing.T) {
	src := &densitytest.Logistic{N: 8, D: 1, A: 4, C: 1.0}
	ds := bernoulliData(src, linspace(0, 2, 9), nil, 50, 3)
	few := make([]bool, ds.M) // 5 unseen snapshots per point, fewer than minUnseen
	for _, idx := range data.NewGrid(ds).Index {
		for _, m := range idx[:5] {
			few[m] = true
		}
	}
	for _, tc := range []struct {
		name   string
		refine int
		noted  bool
	}{{"data grid", 1, true}, {"refined", 2, false}} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := Config{Bootstrap: 5, Threads: 1, Seed: 1, ModelSamples: 50, Refine: tc.refine, Unseen: few, Indicators: []string{"lbc"}}
			res, err := Run(context.Background(), []density.Source{src}, ds, cfg)
			if err != nil {
				t.Fatal(err)
			}
			noted := false
			for _, n := range res.Notes {
				if strings.Contains(n, "were not compared on the snapshots the model did not train on") {
					noted = true
				}
			}
			if noted != tc.noted {
				t.Errorf("notes %q: the 'not compared' note present %v, want %v", res.Notes, noted, tc.noted)
			}
		})
	}
}
