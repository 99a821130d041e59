package indicator_test

import (
	"fmt"

	"tidemark/indicator"
)

// A peak sampled at three neighbouring grid points is located between them
// by the parabola through the points.
func ExampleParabolaVertex() {
	// Samples of y = 1 − (x − 2.3)² at x = 2, 2.5, 3.
	f := func(x float64) float64 { return 1 - (x-2.3)*(x-2.3) }
	x, y := indicator.ParabolaVertex(2, f(2), 2.5, f(2.5), 3, f(3))
	fmt.Printf("peak at %.3f, height %.3f\n", x, y)
	// Output: peak at 2.300, height 1.000
}
