package scaling

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// peakFrac is the part of a peak's height above the curve's minimum that
// CurvePeak fits: the points above minimum + peakFrac·(top − minimum).
const peakFrac = 0.7

// minPeakPoints is the fewest points CurvePeak fits.
const minPeakPoints = 5

// CurvePeak locates the maximum of a curve sampled at increasing x with
// values y and standard errors yerr (all positive) by a weighted
// least-squares parabola through the top of its highest peak: the
// contiguous points around the highest three-point running mean whose
// running means lie above 70% of the peak's height over the curve's
// minimum, widened to at least 5 points (a parabola through the top of a
// peak is common practice; the window follows the peak's own width, so
// the bias of an asymmetric peak scales with it). The error is the spread
// of the vertex over a parametric bootstrap of reps curves redrawn from
// normal distributions with the given errors (vertices clipped to the
// window), multiplied by √(χ²/dof) when the points scatter more than their
// errors. ok is false when there are too few points or the top is not
// concave.
func CurvePeak(x, y, yerr []float64, reps int, seed uint64) (at, err float64, n int, ok bool) {
	m := len(x)
	if m < minPeakPoints || len(y) != m || len(yerr) != m {
		return 0, 0, 0, false
	}
	lo := math.Inf(1)
	for i, v := range y {
		if !(yerr[i] > 0) || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, 0, 0, false
		}
		lo = math.Min(lo, v)
	}
	sm := make([]float64, m)
	for i := range y {
		a, b := max(0, i-1), min(m-1, i+1)
		if i == 0 || i == m-1 {
			a, b = i, i
		}
		sm[i] = stat.Mean(y[a:b+1], nil)
	}
	top := 0
	for i := range sm {
		if sm[i] > sm[top] {
			top = i
		}
	}
	thr := lo + peakFrac*(sm[top]-lo)
	a, b := top, top
	for a > 0 && sm[a-1] >= thr {
		a--
	}
	for b < m-1 && sm[b+1] >= thr {
		b++
	}
	for b-a+1 < minPeakPoints {
		if a > 0 {
			a--
		}
		if b-a+1 < minPeakPoints && b < m-1 {
			b++
		}
	}
	xs, ys, es := x[a:b+1], y[a:b+1], yerr[a:b+1]
	v, chi2, good := vertex(xs, ys, es)
	if !good {
		return 0, 0, 0, false
	}
	rng := rand.New(rand.NewPCG(seed, 0x9ea4))
	vs := make([]float64, reps)
	yy := make([]float64, len(ys))
	for r := range vs {
		for i := range yy {
			yy[i] = ys[i] + es[i]*rng.NormFloat64()
		}
		w, _, g := vertex(xs, yy, es)
		if !g { // a convex top: its highest point
			best := 0
			for i := range yy {
				if yy[i] > yy[best] {
					best = i
				}
			}
			w = xs[best]
		}
		vs[r] = w
	}
	err = stat.StdDev(vs, nil)
	if dof := len(xs) - 3; dof > 0 && chi2/float64(dof) > 1 {
		err *= math.Sqrt(chi2 / float64(dof))
	}
	return v, err, len(xs), true
}

// vertex fits y = c0 + c1·(x − x̄) + c2·(x − x̄)² with weights 1/e² and
// returns the position of the maximum clipped to [x_0, x_last], the χ², and
// whether the parabola is concave.
func vertex(x, y, e []float64) (at, chi2 float64, ok bool) {
	n := len(x)
	xm := stat.Mean(x, nil)
	X := mat.NewDense(n, 3, nil)
	r := mat.NewVecDense(n, nil)
	for i := range x {
		w, d := 1/e[i], x[i]-xm
		X.Set(i, 0, w)
		X.Set(i, 1, w*d)
		X.Set(i, 2, w*d*d)
		r.SetVec(i, w*y[i])
	}
	var c mat.VecDense
	if err := c.SolveVec(X, r); err != nil {
		return 0, 0, false
	}
	if !(c.AtVec(2) < 0) {
		return 0, 0, false
	}
	var res mat.VecDense
	res.MulVec(X, &c)
	res.SubVec(r, &res)
	at = xm - c.AtVec(1)/(2*c.AtVec(2))
	return math.Min(math.Max(at, x[0]), x[n-1]), mat.Dot(&res, &res), true
}
