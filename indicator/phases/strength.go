package phases

import (
	"fmt"
	"math"
)

// Grid is a 2-D product grid (see the package comment for the ordering).
type Grid struct {
	// X0 and X1 are the ascending values of the two axes.
	X0, X1 []float64
}

// N0 returns the number of values of axis 0.
func (g Grid) N0() int { return len(g.X0) }

// N1 returns the number of values of axis 1.
func (g Grid) N1() int { return len(g.X1) }

// K returns the number of grid points.
func (g Grid) K() int { return len(g.X0) * len(g.X1) }

// Point returns the coordinates of point k.
func (g Grid) Point(k int) [2]float64 { return [2]float64{g.X0[k/g.N1()], g.X1[k%g.N1()]} }

// Check returns an error unless both axes have at least two ascending values.
func (g Grid) Check() error {
	for a, ax := range [][]float64{g.X0, g.X1} {
		if len(ax) < 2 {
			return fmt.Errorf("phases: axis %d has %d values, expected at least 2", a, len(ax))
		}
		for i := 1; i < len(ax); i++ {
			if !(ax[i] > ax[i-1]) {
				return fmt.Errorf("phases: axis %d is not ascending at index %d (%g after %g)", a, i, ax[i], ax[i-1])
			}
		}
	}
	return nil
}

// MaxEigen returns the largest eigenvalue of the symmetric 2×2 matrix
// [[a, b], [b, c]]: (a+c)/2 + √(((a−c)/2)² + b²).
func MaxEigen(a, b, c float64) float64 {
	m := (a + c) / 2
	d := (a - c) / 2
	return m + math.Hypot(d, b)
}

// MetricStrength returns, at every point, the largest eigenvalue of the
// Fisher metric g = [[g00, g01], [g01, g11]] in rescaled units: with
// λ'_a = λ_a/s_a the metric becomes g'_ab = s_a s_b g_ab, so the value is
// the Fisher information per squared unit s along the direction in which
// the snapshot distribution changes fastest. Unlike the trace it does not
// add the two axes' contributions where only one direction matters, and
// unlike a single component it does not depend on the boundary's
// orientation (a ridge crossing the grid obliquely keeps its height). s nil
// means s = (1, 1), parameter units.
func MetricStrength(g00, g01, g11 []float64, s []float64) ([]float64, error) {
	if len(g01) != len(g00) || len(g11) != len(g00) {
		return nil, fmt.Errorf("phases: metric components of lengths %d, %d, %d, expected equal lengths", len(g00), len(g01), len(g11))
	}
	s0, s1 := 1.0, 1.0
	if s != nil {
		if len(s) != 2 || !(s[0] > 0) || !(s[1] > 0) {
			return nil, fmt.Errorf("phases: metric scale %v, expected two positive numbers", s)
		}
		s0, s1 = s[0], s[1]
	}
	out := make([]float64, len(g00))
	for k := range out {
		out[k] = MaxEigen(s0*s0*g00[k], s0*s1*g01[k], s1*s1*g11[k])
	}
	return out, nil
}

// EdgeStrength turns per-edge values along each axis (e0: (n0−1)·n1 edges
// along axis 0, e1: n0·(n1−1) edges along axis 1, multiplied by w0 and w1)
// into a map at points: the larger over the two axes of the mean of the
// point's adjacent edges along that axis. For per-axis Fisher informations
// F_aa from neighbour divergences, with w_a = s_a², this is the largest
// diagonal element of the rescaled metric, a lower bound of its largest
// eigenvalue that equals it where the metric is diagonal. NaN edges are
// skipped.
func EdgeStrength(g Grid, e0, e1 []float64, w0, w1 float64) ([]float64, error) {
	n0, n1 := g.N0(), g.N1()
	if len(e0) != (n0-1)*n1 || len(e1) != n0*(n1-1) {
		return nil, fmt.Errorf("phases: %d and %d edge values, expected %d along axis 0 and %d along axis 1", len(e0), len(e1), (n0-1)*n1, n0*(n1-1))
	}
	out := make([]float64, g.K())
	for i := 0; i < n0; i++ {
		for j := 0; j < n1; j++ {
			var m0, m1 meanAcc
			if i > 0 {
				m0.add(e0[(i-1)*n1+j])
			}
			if i+1 < n0 {
				m0.add(e0[i*n1+j])
			}
			if j > 0 {
				m1.add(e1[i*(n1-1)+j-1])
			}
			if j+1 < n1 {
				m1.add(e1[i*(n1-1)+j])
			}
			out[i*n1+j] = math.Max(w0*m0.mean(), w1*m1.mean())
		}
	}
	return out, nil
}

type meanAcc struct {
	s float64
	n int
}

func (m *meanAcc) add(v float64) {
	if !math.IsNaN(v) && !math.IsInf(v, 0) {
		m.s += v
		m.n++
	}
}

func (m *meanAcc) mean() float64 {
	if m.n == 0 {
		return 0
	}
	return m.s / float64(m.n)
}

// LogLandscape returns log(max(v, floor)) at every point, where floor is
// 10⁻³ times the median of the positive finite values (1 when there are
// none): the Fisher information of a finite system grows by orders of
// magnitude towards a transition, so ridges and plateaus are compared by
// ratios, and a value at or below zero (an estimate dominated by noise)
// sits on the floor.
func LogLandscape(v []float64) []float64 {
	floor := 1e-3 * Quantile(positive(v), 0.5)
	if !(floor > 0) {
		floor = 1
	}
	out := make([]float64, len(v))
	for k, x := range v {
		if math.IsNaN(x) || !(x > floor) {
			x = floor
		}
		out[k] = math.Log(x)
	}
	return out
}

func positive(v []float64) []float64 {
	var p []float64
	for _, x := range v {
		if x > 0 && !math.IsInf(x, 0) {
			p = append(p, x)
		}
	}
	return p
}
