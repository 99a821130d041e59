package scaling

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// synthetic draws peaks from λ_c + a·L^(−1/ν) + b·L^(−1/ν−ω) with normal
// noise of the given relative size (invented data, to test the fitter).
func synthetic(rng *rand.Rand, sizes []float64, lc, a, b, nu, omega, sig float64) []Point {
	var pts []Point
	for _, L := range sizes {
		v := lc + a*math.Pow(L, -1/nu) + b*math.Pow(L, -1/nu-omega)
		pts = append(pts, Point{Size: L, At: v + sig*rng.NormFloat64(), Err: sig})
	}
	return pts
}

// TestFitCoverage checks the stated error against the actual scatter of λ_c
// over many synthetic series: about 68% within one error (common practice
// for a calibrated standard error), for each form.
func TestFitCoverage(t *testing.T) {
	sizes := []float64{8, 12, 16, 24, 32, 48}
	for _, tc := range []struct {
		name string
		opt  FitOptions
		b    float64
		runs int
	}{
		{"nu given", FitOptions{Nu: 1, Bootstrap: 100}, 0, 200},
		{"nu fitted", FitOptions{Bootstrap: 50}, 0, 80},
		{"correction", FitOptions{Nu: 1, Omega: 1, Bootstrap: 100}, -2, 200},
		{"auto, no correction present", FitOptions{Nu: 1, Auto: true, Bootstrap: 100}, 0, 200},
		{"auto, correction present", FitOptions{Nu: 1, Auto: true, Bootstrap: 100}, -2, 200},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, 1))
			runs := tc.runs
			in, meanNu := 0, 0.0
			for r := range runs {
				pts := synthetic(rng, sizes, 2.0, 0.8, tc.b, 1, 1, 0.002)
				o := tc.opt
				o.Seed = uint64(r)
				f, err := FitPeaks(pts, o)
				if err != nil {
					t.Fatal(err)
				}
				if math.Abs(f.Value-2.0) <= f.Err {
					in++
				}
				meanNu += f.Nu / float64(runs)
			}
			frac := float64(in) / float64(runs)
			t.Logf("%d of %d within one error (%.2f), mean ν %.3f", in, runs, frac, meanNu)
			if frac < 0.6 || frac > 0.95 {
				t.Errorf("fraction within one error %.2f, expected about 0.68 (0.6 … 0.95: the drift term makes it conservative)", frac)
			}
			if math.Abs(meanNu-1) > 0.1 {
				t.Errorf("mean ν %.3f, expected 1", meanNu)
			}
		})
	}
}

// TestFitExact recovers the parameters of noise-free points.
func TestFitExact(t *testing.T) {
	sizes := []float64{6, 8, 12, 16, 24}
	pts := synthetic(rand.New(rand.NewPCG(1, 1)), sizes, 1.5, -0.4, 0.3, 0.8, 1.2, 0)
	for i := range pts {
		pts[i].Err = 0.01
	}
	for _, tc := range []struct {
		name string
		opt  FitOptions
	}{{"nu given", FitOptions{Nu: 0.8, Omega: 1.2}}, {"nu fitted", FitOptions{Omega: 1.2}}} {
		t.Run(tc.name, func(t *testing.T) {
			f, err := FitPeaks(pts, tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(f.Value-1.5) > 1e-6 || math.Abs(f.A+0.4) > 1e-5 || math.Abs(f.B-0.3) > 1e-4 || math.Abs(f.Nu-0.8) > 1e-5 {
				t.Errorf("got λ_c %v a %v b %v ν %v, expected 1.5, −0.4, 0.3, 0.8", f.Value, f.A, f.B, f.Nu)
			}
		})
	}
}

func TestFitTooFewSizes(t *testing.T) {
	three := []Point{{8, 2.3, 0.01}, {16, 2.28, 0.01}, {32, 2.275, 0.01}}
	for _, tc := range []struct {
		name string
		pts  []Point
		opt  FitOptions
		want error
	}{
		{"two sizes", three[:2], FitOptions{Nu: 1}, ErrTooFewSizes},
		{"same size twice", []Point{three[0], three[0], three[1]}, FitOptions{Nu: 1}, ErrTooFewSizes},
		{"nu fitted needs 4", three, FitOptions{}, ErrTooFewSizes},
		{"correction needs 4", three, FitOptions{Nu: 1, Omega: 1}, ErrTooFewSizes},
		{"negative error", []Point{three[0], three[1], {32, 2.2, -1}}, FitOptions{Nu: 1}, ErrBadInput},
		{"negative nu", three, FitOptions{Nu: -1}, ErrBadInput},
		{"three is enough", three, FitOptions{Nu: 1}, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := FitPeaks(tc.pts, tc.opt)
			if !errors.Is(err, tc.want) || (tc.want == nil) != (err == nil) {
				t.Errorf("got %v, expected %v", err, tc.want)
			}
		})
	}
}

// TestCombine checks the weighted mean against a hand computation: values
// 1 ± 0.1 and 1.2 ± 0.2 give (1/0.01 + 1.2/0.04)/(1/0.01 + 1/0.04) = 1.04,
// error 1/√125 = 0.0894, χ² = 0.8 (p = 0.371), and, since the errors may be
// correlated, the error is raised to the smallest, 0.1.
func TestCombine(t *testing.T) {
	c := Combine([]float64{1, 1.2}, []float64{0.1, 0.2})
	if math.Abs(c.Value-1.04) > 1e-12 || math.Abs(c.Chi2-0.8) > 1e-12 || c.Err != 0.1 || !c.Floored || c.Inflated || !c.Agree {
		t.Errorf("got %+v", c)
	}
	if math.Abs(c.PValue-0.3711) > 1e-3 {
		t.Errorf("p-value %v, expected 0.371 (χ² = 0.8, one degree of freedom)", c.PValue)
	}
	d := Combine([]float64{1, 2}, []float64{0.1, 0.1})
	if d.Agree || !d.Inflated || math.Abs(d.Err-0.5) > 1e-12 {
		t.Errorf("values 10 errors apart: got %+v, expected disagreement and error 0.1/√2·√50 = 0.5", d)
	}
}

// TestFitAutoChoice checks the number of corrections of the automatic
// form: as many as leave as many degrees of freedom as corrections (ν
// given: 1 from 4 sizes, 2 from 6; ν fitted: 1 from 5), whatever the data
// (here noise-free points on the leading form, which every form fits).
func TestFitAutoChoice(t *testing.T) {
	for _, tc := range []struct {
		n    int
		nu   float64
		want int
	}{{3, 1, 0}, {4, 1, 1}, {5, 1, 1}, {6, 1, 2}, {8, 1, 2}, {4, 0, 0}, {5, 0, 1}, {7, 0, 2}} {
		t.Run(fmt.Sprintf("%d sizes, nu %g", tc.n, tc.nu), func(t *testing.T) {
			var sizes []float64
			for i := range tc.n {
				sizes = append(sizes, 8*math.Pow(1.4, float64(i)))
			}
			pts := synthetic(rand.New(rand.NewPCG(1, 1)), sizes, 2, 0.8, 0, 1, 1, 0)
			for i := range pts {
				pts[i].Err = 0.001
			}
			f, err := FitPeaks(pts, FitOptions{Nu: tc.nu, Auto: true})
			if err != nil {
				t.Fatal(err)
			}
			if f.Corrections != tc.want || len(f.Forms) != tc.want+1 || !f.Forms[tc.want].Chosen || math.Abs(f.Value-2) > 1e-6 {
				t.Errorf("got %d corrections, λ_c %v, forms %+v; expected %d and 2", f.Corrections, f.Value, f.Forms, tc.want)
			}
		})
	}
}
