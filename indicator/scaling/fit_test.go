package scaling

import (
	"math"
	"testing"

	"tidemark/data/ising"
)

// onsagerTc is Onsager's critical temperature of the square-lattice Ising
// model, 2/ln(1+√2) (L. Onsager, Phys. Rev. 65, 117 (1944)).
var onsagerTc = 2 / math.Log(1+math.Sqrt2)

// fisherPeak returns the maximum of the exact Fisher information in T of the
// periodic L×L Ising lattice, F(T) = Var(E)/T⁴ = N·c(T)/T² (common practice:
// the Fisher information of a Boltzmann family in T), with c from Kaufman's
// partition function (B. Kaufman, Phys. Rev. 76, 1232 (1949)).
func fisherPeak(L int) float64 {
	f := func(t float64) float64 { return ising.KaufmanHeatCapacity(L, L, t, 1, 1) / (t * t) }
	a, b := 2.0, 3.0
	r := (math.Sqrt(5) - 1) / 2
	best, bt := math.Inf(-1), a
	for i := 0; i <= 200; i++ {
		t := a + (b-a)*float64(i)/200
		if v := f(t); v > best {
			best, bt = v, t
		}
	}
	a, b = bt-0.005, bt+0.005
	x1, x2 := b-r*(b-a), a+r*(b-a)
	f1, f2 := f(x1), f(x2)
	for b-a > 1e-11 {
		if f1 > f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - r*(b-a)
			f1 = f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + r*(b-a)
			f2 = f(x2)
		}
	}
	return (a + b) / 2
}

// TestKaufmanPeaks extrapolates exact finite-lattice peak temperatures of
// the Ising torus with ν = 1 (Onsager's exponent) and a 1/L² correction
// (ω = 1) and compares with Onsager's T_c.
//
// Heat capacity peaks (A. E. Ferdinand and M. E. Fisher, Phys. Rev. 185,
// 832 (1969)), L = 8 … 64: within 0.01%.
//
// Fisher information peaks, F(T) = N·c/T²: their 1/T² weight pulls the
// peak of small lattices down by an amount that falls off only like
// ln L/L² (the heat capacity's height grows like ln L, its curvature like
// L²; our reading), so the peaks move non-monotonically with L below
// L ≈ 16 (2.2655 at L = 8, 2.2886 at 16, 2.2793 at 64). Measured: the
// leading form alone on L = 8 … 64 misses by 0.84%, with ω = 1 by 0.11%;
// on L = 12 … 64 with ω = 1 by 0.063%, which is what is asserted (0.1%).
//
// The peaks are exact, so the fits are unweighted; the error (residuals
// plus the drift when the smallest size is left out) sees the missed
// corrections only partly: the differences measured are 2.2–2.9 errors,
// so the check is that they stay within 3.
func TestKaufmanPeaks(t *testing.T) {
	for _, tc := range []struct {
		name  string
		sizes []int
		peak  func(L int) float64
		tol   float64
	}{
		{"heat capacity L=8…64", []int{8, 12, 16, 24, 32, 48, 64}, func(L int) float64 {
			T, _ := ising.KaufmanPeak(L, L, 1, 1, 2, 3)
			return T
		}, 1e-4},
		{"Fisher information L=12…64", []int{12, 16, 24, 32, 48, 64}, fisherPeak, 1e-3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var pts []Point
			for _, L := range tc.sizes {
				pts = append(pts, Point{Size: float64(L), At: tc.peak(L)})
			}
			f, err := FitPeaks(pts, FitOptions{Nu: 1, Omega: 1, Bootstrap: 200, Seed: 3})
			if err != nil {
				t.Fatal(err)
			}
			diff := f.Value - onsagerTc
			t.Logf("T_c = %.6f ± %.2g (Onsager %.6f, rel %.2g, %.2f errors), drift %.2g", f.Value, f.Err, onsagerTc, diff/onsagerTc, diff/f.Err, f.Drift)
			if math.Abs(diff)/onsagerTc > tc.tol {
				t.Errorf("T_c = %v, Onsager %v: relative difference %.2g above %g", f.Value, onsagerTc, diff/onsagerTc, tc.tol)
			}
			if math.Abs(diff) > 3*f.Err {
				t.Errorf("difference %.2g from Onsager's T_c is more than 3 errors (%.2g)", diff, f.Err)
			}
			if f.Weighted {
				t.Error("exact peaks have no error: expected an unweighted fit")
			}
		})
	}
}
