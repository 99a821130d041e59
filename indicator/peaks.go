package indicator

import (
	"math"
	"sort"
)

// Peak is a local maximum of a curve along one of its lines.
type Peak struct {
	// At is the parabola-refined position (one entry per axis; only the
	// line's axis is refined, the others are the line's fixed values).
	At []float64
	// Err is the standard error of At (bootstrap and spread across sources
	// in quadrature); 0 on the fixed axes.
	Err []float64
	// Height is the refined height, HeightErr its standard error.
	Height, HeightErr float64
	// Prominence is the height above the higher of the two neighbouring
	// minima.
	Prominence float64
	// Line is the index of the line in Curve.Lines; Index the position
	// index of the highest sample point.
	Line, Index int
	// Tested is false when no error estimate was available to test the
	// peak against (no bootstrap): every local maximum is then kept.
	Tested bool
	// Unseen is the peak on the snapshots the model did not train on (nil
	// when the scan had none to compare; see Config.Unseen).
	Unseen *Unseen
	// bootErr is the bootstrap part of Err along the line's axis.
	bootErr float64
}

// ParabolaVertex returns the vertex of the parabola through (x0,y0),
// (x1,y1), (x2,y2) with x0 < x1 < x2 and y1 ≥ y0, y2, clamped to [x0, x2],
// and its height.
func ParabolaVertex(x0, y0, x1, y1, x2, y2 float64) (x, y float64) {
	// Newton divided differences: y = y0 + a(x−x0) + b(x−x0)(x−x1)
	a := (y1 - y0) / (x1 - x0)
	b := ((y2-y1)/(x2-x1) - a) / (x2 - x0)
	if b >= 0 || math.IsNaN(b) {
		return x1, y1
	}
	x = (x0+x1)/2 - a/(2*b)
	x = math.Max(x0, math.Min(x2, x))
	y = y0 + a*(x-x0) + b*(x-x0)*(x-x1)
	return x, y
}

// localMaxima returns the interior indices i (0 < i < n−1) of v with
// v[i] > v[i−1] and v[i] ≥ v[i+1], their prominence (height above the
// higher of the two neighbouring minima, found by walking down each side
// until a higher value or the end) and the index of that minimum.
// NaN never peaks.
func localMaxima(v []float64) (idx []int, prom []float64, base []int) {
	n := len(v)
	for i := 1; i < n-1; i++ {
		if !(v[i] > v[i-1] && v[i] >= v[i+1]) {
			continue
		}
		li, ri := i, i
		for j := i - 1; j >= 0 && !(v[j] > v[i]); j-- {
			if v[j] < v[li] {
				li = j
			}
		}
		for j := i + 1; j < n && !(v[j] > v[i]); j++ {
			if v[j] < v[ri] {
				ri = j
			}
		}
		b := li
		if v[ri] > v[li] {
			b = ri
		}
		idx = append(idx, i)
		prom = append(prom, v[i]-v[b])
		base = append(base, b)
	}
	return idx, prom, base
}

// refineAt returns the parabola-refined (x, y) of the maximum at index i of
// (x, v) along a line.
func refineAt(x, v []float64, i int) (float64, float64) {
	return ParabolaVertex(x[i-1], v[i-1], x[i], v[i], x[i+1], v[i+1])
}

// nearestMax returns the parabola-refined local maximum of v nearest to
// index i0 within ±reach positions (ties: the higher), for following a peak
// into a bootstrap replicate; when the replicate has no local maximum there,
// the highest point of the range (refined if it is interior).
func nearestMax(x, v []float64, i0, reach int) (float64, float64) {
	lo, hi := max(1, i0-reach), min(len(v)-2, i0+reach)
	best := -1
	for i := lo; i <= hi; i++ {
		if !(v[i] > v[i-1] && v[i] >= v[i+1]) {
			continue
		}
		if best < 0 || abs(i-i0) < abs(best-i0) || (abs(i-i0) == abs(best-i0) && v[i] > v[best]) {
			best = i
		}
	}
	if best >= 0 {
		return refineAt(x, v, best)
	}
	lo, hi = max(0, i0-reach), min(len(v)-1, i0+reach)
	best = lo
	for i := lo; i <= hi; i++ {
		if v[i] > v[best] {
			best = i
		}
	}
	if best == 0 || best == len(v)-1 {
		return x[best], v[best]
	}
	return refineAt(x, v, best)
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// findPeaks finds the peaks of c along each line: local maxima whose
// prominence exceeds twice its own error (bootstrap spread of the
// difference between the maximum and its neighbouring minimum; every
// local maximum when tested is false), refined by a parabola through the
// top three points. noise is the statistical (bootstrap) error of each
// position, c.Err when nil; the spread across sources is not noise and is
// left out of the test. reps are the bootstrap replicates of the curve
// (each the same length as c.Val) and srcVals the curves of the individual
// sources; their peak spreads become the peak errors, in quadrature.
func findPeaks(c *Curve, reps [][]float64, srcVals [][]float64, tested bool, noise []float64) {
	if noise == nil {
		noise = c.Err
	}
	c.Peaks = nil
	for li, ln := range c.Lines {
		if len(ln.Idx) < 3 {
			continue
		}
		x := make([]float64, len(ln.Idx))
		v := make([]float64, len(ln.Idx))
		for j, p := range ln.Idx {
			x[j] = c.Pos[p][ln.Axis]
			v[j] = c.Val[p]
		}
		idx, prom, base := localMaxima(v)
		for n, i := range idx {
			// The error of the prominence: its spread over the bootstrap
			// replicates, or the two points' errors in quadrature.
			e := math.Hypot(noise[ln.Idx[i]], noise[ln.Idx[base[n]]])
			if len(reps) > 1 {
				d := make([]float64, len(reps))
				for b, r := range reps {
					d[b] = r[ln.Idx[i]] - r[ln.Idx[base[n]]]
				}
				e = stdDev(d)
			}
			if tested && !(prom[n] > 2*e) {
				continue
			}
			xp, yp := refineAt(x, v, i)
			pk := Peak{At: append([]float64(nil), c.Pos[ln.Idx[i]]...), Err: make([]float64, len(c.Pos[0])),
				Height: yp, Prominence: prom[n], Line: li, Index: ln.Idx[i], Tested: tested}
			pk.At[ln.Axis] = xp
			var xs, ys []float64
			for _, r := range reps {
				rv := make([]float64, len(ln.Idx))
				for j, p := range ln.Idx {
					rv[j] = r[p]
				}
				a, b := nearestMax(x, rv, i, 2)
				xs = append(xs, a)
				ys = append(ys, b)
			}
			ex, ey := stdDev(xs), stdDev(ys)
			pk.bootErr = ex
			var sx, sy []float64
			for _, r := range srcVals {
				rv := make([]float64, len(ln.Idx))
				for j, p := range ln.Idx {
					rv[j] = r[p]
				}
				a, b := nearestMax(x, rv, i, 2)
				sx = append(sx, a)
				sy = append(sy, b)
			}
			if len(sx) > 1 {
				ex = math.Hypot(ex, stdDev(sx))
				ey = math.Hypot(ey, stdDev(sy))
			}
			pk.Err[ln.Axis] = ex
			pk.HeightErr = ey
			c.Peaks = append(c.Peaks, pk)
		}
		highestSpread(c, li, x, reps, srcVals)
	}
	sort.SliceStable(c.Peaks, func(i, j int) bool { return c.Peaks[i].Line < c.Peaks[j].Line })
}

// highestSpread widens the error of the highest peak found on line li (if
// any) to the spread of where each bootstrap replicate, and each source,
// has its own highest interior local maximum on the line. Following the one local maximum
// into the replicates (findPeaks) measures how that maximum wobbles; on a
// noisy curve with two maxima of similar height, which of them is highest
// changes between replicates and sources, and the highest peak's position
// is uncertain by their distance.
func highestSpread(c *Curve, li int, x []float64, reps, srcVals [][]float64) {
	top := -1
	for i := range c.Peaks {
		if c.Peaks[i].Line == li && (top < 0 || c.Peaks[i].Height > c.Peaks[top].Height) {
			top = i
		}
	}
	if top < 0 {
		return
	}
	ln := c.Lines[li]
	at := func(set [][]float64) []float64 {
		var xs []float64
		rv := make([]float64, len(ln.Idx))
		for _, r := range set {
			for j, p := range ln.Idx {
				rv[j] = r[p]
			}
			// The highest interior local maximum: the ends of a line are
			// not peaks (lbc's curve rises towards them).
			idx, _, _ := localMaxima(rv)
			best := -1
			for _, i := range idx {
				if best < 0 || rv[i] > rv[best] {
					best = i
				}
			}
			if best < 0 {
				continue
			}
			a, _ := refineAt(x, rv, best)
			xs = append(xs, a)
		}
		return xs
	}
	pk := &c.Peaks[top]
	boot := math.Max(pk.bootErr, stdDev(at(reps)))
	e := boot
	if len(srcVals) > 1 {
		src := stdDev(at(srcVals))
		if src2 := pk.Err[ln.Axis]*pk.Err[ln.Axis] - pk.bootErr*pk.bootErr; src2 > src*src {
			src = math.Sqrt(src2)
		}
		e = math.Hypot(boot, src)
	}
	pk.bootErr = boot
	pk.Err[ln.Axis] = e
}

// stdDev returns the sample standard deviation (n−1), or 0 for fewer than
// two values.
func stdDev(v []float64) float64 {
	if len(v) < 2 {
		return 0
	}
	m := 0.0
	for _, x := range v {
		m += x
	}
	m /= float64(len(v))
	s := 0.0
	for _, x := range v {
		s += (x - m) * (x - m)
	}
	return math.Sqrt(s / float64(len(v)-1))
}

// Boundary is a polyline through the ridge of a 2-D map.
type Boundary struct {
	// Indicator is the curve's name ("local_T", "fisher_deriv", …).
	Indicator string `json:"indicator"`
	// Axis is the axis along which each ridge maximum was sought.
	Axis string `json:"along"`
	// Points are the ridge points, ordered along the other axis.
	Points [][]float64 `json:"points"`
	// Err are their standard errors (per axis).
	Err [][]float64 `json:"err"`
}

// boundaries joins, for each orientation of a curve's lines, the highest
// peak of each line into polylines; a line without a peak above the noise
// breaks the polyline. Polylines of fewer than 2 points are dropped.
func boundaries(c *Curve, names []string) []Boundary {
	var out []Boundary
	for a := range names {
		var cur *Boundary
		flush := func() {
			if cur != nil && len(cur.Points) >= 2 {
				out = append(out, *cur)
			}
			cur = nil
		}
		for li, ln := range c.Lines {
			if ln.Axis != a {
				continue
			}
			best := -1
			for i, p := range c.Peaks {
				if p.Line == li && (best < 0 || p.Height > c.Peaks[best].Height) {
					best = i
				}
			}
			if best < 0 {
				flush()
				continue
			}
			if cur == nil {
				cur = &Boundary{Indicator: c.Name, Axis: names[a]}
			}
			cur.Points = append(cur.Points, c.Peaks[best].At)
			cur.Err = append(cur.Err, c.Peaks[best].Err)
		}
		flush()
	}
	return out
}
