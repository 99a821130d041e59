package phases

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// frame holds the grid's axes in range units: x'_a = (x_a − min_a)/range_a,
// in which the boundary's profile is fitted.
type frame struct {
	g      Grid
	lo, rg [2]float64
}

func newFrame(g Grid) frame {
	return frame{g: g,
		lo: [2]float64{g.X0[0], g.X1[0]},
		rg: [2]float64{g.X0[g.N0()-1] - g.X0[0], g.X1[g.N1()-1] - g.X1[0]}}
}

func (f frame) unit(p [2]float64) [2]float64 {
	return [2]float64{(p[0] - f.lo[0]) / f.rg[0], (p[1] - f.lo[1]) / f.rg[1]}
}

// spacing is the larger of the axes' largest spacings in range units.
func (f frame) spacing() float64 {
	h := 0.0
	for a, ax := range [][]float64{f.g.X0, f.g.X1} {
		for i := 1; i < len(ax); i++ {
			h = math.Max(h, (ax[i]-ax[i-1])/f.rg[a])
		}
	}
	return h
}

// tangent returns the unit direction (range units) of the boundary through
// crossing c: the principal axis of the crossings of the same two phases
// within 2.5 grid spacings of it (c included), ok false with fewer than
// three such crossings.
func (f frame) tangent(c crossing, cs []crossing) ([2]float64, bool) {
	p0 := f.unit(c.p)
	r := 2.5 * f.spacing()
	var pts [][2]float64
	for _, o := range cs {
		if o.a != c.a || o.b != c.b {
			continue
		}
		q := f.unit(o.p)
		if math.Hypot(q[0]-p0[0], q[1]-p0[1]) <= r {
			pts = append(pts, q)
		}
	}
	if len(pts) < 3 {
		return [2]float64{}, false
	}
	var mx, my float64
	for _, q := range pts {
		mx += q[0] / float64(len(pts))
		my += q[1] / float64(len(pts))
	}
	var sxx, sxy, syy float64
	for _, q := range pts {
		dx, dy := q[0]-mx, q[1]-my
		sxx += dx * dx
		sxy += dx * dy
		syy += dy * dy
	}
	// Principal direction of the 2×2 scatter matrix.
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	return [2]float64{math.Cos(th), math.Sin(th)}, true
}

// normalRidge relocates crossing c on its grid line from the profile of
// the log landscape w across the boundary. With τ the boundary's direction
// (tangent) and n its normal, every grid point within 1.5 spacings of the
// crossing across the boundary and along it, in one of the two phases the
// boundary separates (not beyond another boundary at a junction), has
// coordinates
// u = n·(x − x_c) and s = τ·(x − x_c), and w ≈ a + b·u + c·u² + d·s is
// fitted by least squares: the crest, where the profile across the
// boundary peaks, is at u* = −b/(2c), and the point moves to where the
// line u = u* meets its grid line. The fit is repeated once around the
// moved point. Because the boundary runs obliquely through the grid, the
// grid points on both sides fall at many different distances u from it,
// so the profile is sampled far more finely than the grid spacing and by
// the points of both axes' lines; the term d·s absorbs a height that
// changes along the boundary. ok is false when the fit has too few points,
// no maximum, or the boundary runs within 20° of the grid line (then the
// crossing of the two is ill-defined), or when the point would leave the
// grid interval in which the phase changes by more than half its length.
//
// w holds the log landscape at the K grid points followed by the values at
// the extra sample points (Samples.Points), which join the fit alike.
func (f frame) normalRidge(c crossing, tau [2]float64, w []float64, extra [][2]float64, step float64, labels []int) (float64, bool) {
	n := [2]float64{-tau[1], tau[0]}
	ax := c.axis
	if math.Abs(n[ax]) < math.Sin(20*math.Pi/180) {
		return 0, false
	}
	h := f.spacing()
	p := f.unit(c.p)
	// fit returns the crest's offset u* from p with a window of half-width
	// wu across the boundary.
	fit := func(wu float64) (float64, bool) {
		var rows [][]float64
		var rhs []float64
		K := f.g.K()
		for k := 0; k < K+len(extra); k++ {
			if math.IsNaN(w[k]) || math.IsInf(w[k], 0) {
				continue
			}
			var q [2]float64
			if k < K {
				q = f.unit(f.g.Point(k))
			} else {
				q = f.unit(extra[k-K])
			}
			dx, dy := q[0]-p[0], q[1]-p[1]
			u := n[0]*dx + n[1]*dy
			s := tau[0]*dx + tau[1]*dy
			if math.Abs(u) > wu || math.Abs(s) > 1.5*h {
				continue
			}
			if k < K && labels[k] != c.a && labels[k] != c.b {
				continue // beyond another boundary (a junction)
			}
			rows = append(rows, []float64{1, u / wu, (u / wu) * (u / wu), s / h})
			rhs = append(rhs, w[k])
		}
		if len(rows) < 7 {
			return 0, false
		}
		a := mat.NewDense(len(rows), 4, nil)
		for r, row := range rows {
			a.SetRow(r, row)
		}
		var qr mat.QR
		qr.Factorize(a)
		var coef mat.VecDense
		if err := qr.SolveVecTo(&coef, false, mat.NewVecDense(len(rhs), rhs)); err != nil {
			return 0, false
		}
		b, cc := coef.AtVec(1), coef.AtVec(2)
		if !(cc < 0) {
			return 0, false
		}
		return math.Max(-1, math.Min(1, -b/(2*cc))) * wu, true
	}
	widths := []float64{1.5 * h, 1.5 * h}
	if step > 0 && step < 1 {
		// Inserted points sample the profile more finely: narrow the window
		// to 1.5 of their spacings, where the profile's log is closer to a
		// parabola than over the grid's.
		widths = append(widths, 1.5*h*step, 1.5*h*step)
	}
	for i, wu := range widths {
		us, ok := fit(wu)
		if !ok {
			if i == 0 {
				return 0, false
			}
			break
		}
		// Move along the grid line (axis ax) to the line u = us.
		p[ax] += us / n[ax]
	}
	x := f.lo[ax] + p[ax]*f.rg[ax]
	if d := (c.x1 - c.x0) / 2; x < c.x0-d || x > c.x1+d {
		// The crest lies beyond the interval in which the segmentation
		// puts the boundary (typically at a junction, where the profile
		// is not one ridge's): keep the first estimate.
		return 0, false
	}
	return x, true
}
