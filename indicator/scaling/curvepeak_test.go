package scaling

import (
	"math"
	"testing"
)

// TestCurvePeak locates the top of invented curves: a parabola with its
// vertex between grid points (recovered exactly, the window being the
// points above 70% of the height over the minimum), a symmetric
// Lorentzian centred on a grid point (exactly), and a valley (refused).
func TestCurvePeak(t *testing.T) {
	grid := func(f func(x float64) float64) (x, y, e []float64) {
		for i := 0; i <= 40; i++ {
			v := 2 + 0.025*float64(i)
			x, y, e = append(x, v), append(y, f(v)), append(e, 0.05)
		}
		return
	}
	for _, tc := range []struct {
		name string
		f    func(x float64) float64
		want float64
		ok   bool
	}{
		{"parabola", func(x float64) float64 { return 10 - 40*(x-2.3137)*(x-2.3137) }, 2.3137, true},
		{"Lorentzian", func(x float64) float64 { u := (x - 2.5) * 8; return 10 / (1 + u*u) }, 2.5, true},
		{"valley", func(x float64) float64 { return (x - 2.5) * (x - 2.5) }, 0, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x, y, e := grid(tc.f)
			at, err, n, ok := CurvePeak(x, y, e, 200, 1)
			if ok != tc.ok {
				t.Fatalf("ok = %v, expected %v", ok, tc.ok)
			}
			if ok && (math.Abs(at-tc.want) > 1e-9 || !(err > 0) || n < minPeakPoints) {
				t.Errorf("peak at %v ± %v from %d points, expected %v with an error > 0", at, err, n, tc.want)
			}
		})
	}
}
