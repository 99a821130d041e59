package phases

import (
	"fmt"
	"math"
	"sort"
)

// Boundary is a polyline between two phases.
type Boundary struct {
	// Between holds the two phases' labels, lower first.
	Between [2]int `json:"between"`
	// Points are the boundary points as (axis 0, axis 1) pairs, in order
	// along the line.
	Points [][2]float64 `json:"points"`
	// Err are their standard errors per axis: along the grid line on which
	// a point was located, and 0 across it.
	Err [][2]float64 `json:"err"`
	// Along holds, for each point, the axis of the grid line on which it
	// was located (its other coordinate is that line's grid value).
	Along []int `json:"along_axis"`
}

// crossing is a boundary point on one grid line.
type crossing struct {
	a, b int // phases, a < b
	p, e [2]float64
	axis int
	// x0 < x1 are the grid values along the line between which the phase
	// changes.
	x0, x1 float64
}

// Boundaries locates the boundaries between the phases of seg. Along every
// grid line (both orientations), where the phase changes between
// neighbouring points i and i+1, a first estimate is the vertex of the
// parabola through the log strength at the higher of the two and its
// neighbours along the line, kept within one spacing of it. The
// boundary's direction there is the principal axis of the nearby first
// estimates, and the point is then moved along its grid line to the crest
// of the profile across the boundary (frame.normalRidge), which the grid
// points of both orientations sample at many distances from an oblique
// boundary. Its error is the standard deviation of the same construction
// on every replica in reps (bootstrap) and, in quadrature, across the maps
// in members (one per source of an ensemble; nil or one map for none). The
// points of each pair of phases are joined into polylines by walking to the
// nearest unused point (in units of each axis's range) and starting a new
// polyline where that step exceeds three grid spacings.
func Boundaries(g Grid, strength []float64, reps, members [][]float64, seg *Segmentation) ([]Boundary, error) {
	return BoundariesWith(g, strength, reps, members, seg, Samples{})
}

// Samples are values of a strength map away from the grid's points (a
// refinement near the boundaries), with their replicas in the order of the
// grid map's.
type Samples struct {
	// Points are the positions, Val the strength there.
	Points [][2]float64
	Val    []float64
	// Reps and Members are the values of each bootstrap replica and of each
	// ensemble member at the points (nil or as many as the grid map has).
	Reps, Members [][]float64
	// Step is the points' spacing along the grid lines in grid spacings
	// (1/R for R−1 points inserted per edge; 0 when they are scattered):
	// the fit across a boundary then narrows its window to their scale.
	Step float64
}

// BoundariesWith is Boundaries with extra samples of the strength: they join
// the grid points in the fit of the profile across each boundary (the
// crossings and the segmentation stay those of the grid).
func BoundariesWith(g Grid, strength []float64, reps, members [][]float64, seg *Segmentation, extra Samples) ([]Boundary, error) {
	if err := g.Check(); err != nil {
		return nil, err
	}
	ne := len(extra.Points)
	if len(extra.Val) != ne || (extra.Reps != nil && len(extra.Reps) != len(reps)) || (extra.Members != nil && len(extra.Members) != len(members)) {
		return nil, fmt.Errorf("phases: %d extra points with %d values, %d and %d replica sets, expected %d values and %d and %d sets", ne, len(extra.Val), len(extra.Reps), len(extra.Members), ne, len(reps), len(members))
	}
	for _, r := range append(append([][]float64(nil), extra.Reps...), extra.Members...) {
		if len(r) != ne {
			return nil, fmt.Errorf("phases: an extra replica has %d values, expected %d", len(r), ne)
		}
	}
	// join returns the log landscape of a grid map followed by its extra
	// values (the grid's map alone when there are none).
	join := func(grid, ex []float64) []float64 {
		if ne == 0 {
			return LogLandscape(grid)
		}
		if ex == nil {
			ex = extra.Val
		}
		return LogLandscape(append(append([]float64(nil), grid...), ex...))
	}
	K := g.K()
	if len(strength) != K || len(seg.Labels) != K {
		return nil, fmt.Errorf("phases: %d strength values and %d labels, expected %d", len(strength), len(seg.Labels), K)
	}
	for _, r := range append(append([][]float64(nil), reps...), members...) {
		if len(r) != K {
			return nil, fmt.Errorf("phases: a replica has %d values, expected %d", len(r), K)
		}
	}
	v := LogLandscape(strength)
	var vr, vm [][]float64
	for _, r := range reps {
		vr = append(vr, LogLandscape(r))
	}
	if len(members) > 1 {
		for _, r := range members {
			vm = append(vm, LogLandscape(r))
		}
	}
	n0, n1 := g.N0(), g.N1()
	var cs []crossing
	var grid []func(w []float64) float64 // each crossing's first-pass locator
	for axis := 0; axis < 2; axis++ {
		nl, nAlong := n1, n0
		xs := g.X0
		if axis == 1 {
			nl, nAlong, xs = n0, n1, g.X1
		}
		for l := 0; l < nl; l++ {
			pt := func(i int) int {
				if axis == 0 {
					return i*n1 + l
				}
				return l*n1 + i
			}
			for i := 0; i+1 < nAlong; i++ {
				la, lb := seg.Labels[pt(i)], seg.Labels[pt(i+1)]
				if la == lb {
					continue
				}
				c := crossing{a: min(la, lb), b: max(la, lb), axis: axis, x0: xs[i], x1: xs[i+1]}
				x := ridgeAt(xs, v, pt, i)
				if axis == 0 {
					c.p = [2]float64{x, g.X1[l]}
				} else {
					c.p = [2]float64{g.X0[l], x}
				}
				cs = append(cs, c)
				grid = append(grid, func(w []float64) float64 { return ridgeAt(xs, w, pt, i) })
			}
		}
	}
	// Second pass: each crossing from the profile across the boundary,
	// whose direction the first pass's crossings give.
	f := newFrame(g)
	wv := join(strength, extra.Val)
	var wr, wm [][]float64
	for b, r := range reps {
		var ex []float64
		if extra.Reps != nil {
			ex = extra.Reps[b]
		}
		wr = append(wr, join(r, ex))
	}
	if len(members) > 1 {
		for b, r := range members {
			var ex []float64
			if extra.Members != nil {
				ex = extra.Members[b]
			}
			wm = append(wm, join(r, ex))
		}
	}
	out := make([]crossing, len(cs))
	for n, c := range cs {
		K := g.K()
		at := func(w []float64) float64 { return grid[n](w[:K]) }
		if tau, ok := f.tangent(c, cs); ok {
			at = func(w []float64) float64 {
				if x, ok := f.normalRidge(c, tau, w, extra.Points, extra.Step, seg.Labels); ok {
					return x
				}
				return grid[n](w[:K])
			}
		}
		x := at(wv)
		var e2 float64
		for _, set := range [][][]float64{wr, wm} {
			if len(set) > 1 {
				var xb []float64
				for _, w := range set {
					xb = append(xb, at(w))
				}
				e := stdDev(xb)
				e2 += e * e
			}
		}
		c.p[c.axis] = x
		c.e[c.axis] = math.Sqrt(e2)
		out[n] = c
	}
	return chain(g, out), nil
}

// ridgeAt locates the ridge between positions i and i+1 of a line (pt maps
// a position to its point) on the log landscape w.
func ridgeAt(xs, w []float64, pt func(int) int, i int) float64 {
	n := len(xs)
	j := i
	if w[pt(i+1)] > w[pt(i)] {
		j = i + 1
	}
	if j == 0 || j == n-1 {
		// At the grid's edge: the ridge is between the two points, nearer
		// the higher one in proportion to its excess.
		return (xs[i] + xs[i+1]) / 2
	}
	y0, y1, y2 := w[pt(j-1)], w[pt(j)], w[pt(j+1)]
	if y1 < y0 || y1 < y2 {
		return (xs[i] + xs[i+1]) / 2 // not a maximum along the line: the ridge runs obliquely
	}
	// Vertex of the parabola through the three points (Newton divided
	// differences), clamped to the neighbouring points.
	x0, x1, x2 := xs[j-1], xs[j], xs[j+1]
	a := (y1 - y0) / (x1 - x0)
	b := ((y2-y1)/(x2-x1) - a) / (x2 - x0)
	if !(b < 0) {
		return x1
	}
	x := (x0+x1)/2 - a/(2*b)
	return math.Max(x0, math.Min(x2, x))
}

// chain joins the crossings of each pair of phases into polylines.
func chain(g Grid, cs []crossing) []Boundary {
	r0 := g.X0[g.N0()-1] - g.X0[0]
	r1 := g.X1[g.N1()-1] - g.X1[0]
	step := 3 * math.Max((g.X0[1]-g.X0[0])/r0, (g.X1[1]-g.X1[0])/r1)
	dist := func(p, q [2]float64) float64 { return math.Hypot((p[0]-q[0])/r0, (p[1]-q[1])/r1) }
	byPair := map[[2]int][]crossing{}
	var keys [][2]int
	for _, c := range cs {
		k := [2]int{c.a, c.b}
		if _, ok := byPair[k]; !ok {
			keys = append(keys, k)
		}
		byPair[k] = append(byPair[k], c)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i][0] != keys[j][0] {
			return keys[i][0] < keys[j][0]
		}
		return keys[i][1] < keys[j][1]
	})
	var out []Boundary
	for _, k := range keys {
		pts := byPair[k]
		used := make([]bool, len(pts))
		left := len(pts)
		for left > 0 {
			// Start at the unused point farthest from the unused points'
			// centroid: an end of a line-like set.
			var cx, cy float64
			for i, p := range pts {
				if !used[i] {
					cx += p.p[0] / float64(left)
					cy += p.p[1] / float64(left)
				}
			}
			cur, far := -1, -1.0
			for i, p := range pts {
				if d := dist(p.p, [2]float64{cx, cy}); !used[i] && d > far {
					cur, far = i, d
				}
			}
			b := Boundary{Between: k}
			for cur >= 0 {
				used[cur] = true
				left--
				b.Points = append(b.Points, pts[cur].p)
				b.Err = append(b.Err, pts[cur].e)
				b.Along = append(b.Along, pts[cur].axis)
				next, nd := -1, math.Inf(1)
				for i, p := range pts {
					if d := dist(p.p, pts[cur].p); !used[i] && d < nd {
						next, nd = i, d
					}
				}
				if next < 0 || nd > step {
					break
				}
				cur = next
			}
			out = append(out, b)
		}
	}
	return out
}
