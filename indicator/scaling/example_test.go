package scaling_test

import (
	"fmt"
	"math"

	"tidemark/indicator/scaling"
)

// Peaks that move as 2.27 + 0.5/L (invented data) extrapolate to 2.27.
func ExampleFitPeaks() {
	var pts []scaling.Point
	for _, L := range []float64{8, 12, 16, 24, 32} {
		pts = append(pts, scaling.Point{Size: L, At: 2.27 + 0.5/L, Err: 0.002})
	}
	f, err := scaling.FitPeaks(pts, scaling.FitOptions{Nu: 1})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("λ_c = %.4f, a = %.3f, χ² = %.1f for %d dof\n", f.Value, f.A, math.Abs(f.Chi2), f.Dof)
	// Output: λ_c = 2.2700, a = 0.500, χ² = 0.0 for 3 dof
}

// Two indicators 1.3 joint errors apart still agree (χ² = 1.8, p = 0.18);
// the error is inflated by √(χ²/dof).
func ExampleCombine() {
	c := scaling.Combine([]float64{2.27, 2.30}, []float64{0.01, 0.02})
	fmt.Printf("%.4f ± %.4f, agree: %v\n", c.Value, c.Err, c.Agree)
	// Output: 2.2760 ± 0.0120, agree: true
}

// A size series writes one file per size.
func ExampleSeriesPaths() {
	fmt.Println(scaling.SeriesPaths("runs/film.npz", "L", []int{8, 16, 32}))
	// Output: [runs/film-L8.npz runs/film-L16.npz runs/film-L32.npz]
}
