package phases_test

import (
	"fmt"
	"math"

	"tidemark/indicator/phases"
)

// Segment a boundary-strength map with one ridge along x0 = 1 into phases
// and locate the boundary between them.
func ExampleSegment() {
	g := phases.Grid{X0: []float64{0, 0.25, 0.5, 0.75, 1, 1.25, 1.5, 1.75, 2}, X1: []float64{0, 0.5, 1}}
	strength := make([]float64, g.K())
	for k := range strength {
		x := g.Point(k)[0]
		strength[k] = 1 + 30/(1+math.Pow((x-1)/0.2, 2))
	}
	seg, err := phases.Segment(g, strength, nil, phases.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	bs, _ := phases.Boundaries(g, strength, nil, nil, seg)
	fmt.Println(seg.Count, "phases")
	for _, p := range bs[0].Points {
		fmt.Printf("boundary at x0 = %.2f, x1 = %.1f\n", p[0], p[1])
	}
	// Output:
	// 2 phases
	// boundary at x0 = 1.00, x1 = 0.0
	// boundary at x0 = 1.00, x1 = 0.5
	// boundary at x0 = 1.00, x1 = 1.0
}
