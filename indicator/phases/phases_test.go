package phases

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func linspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return v
}

// TestMaxEigenAgainstGonum checks the closed form against gonum's symmetric
// eigensolver (a general-purpose reference library).
func TestMaxEigenAgainstGonum(t *testing.T) {
	for _, m := range [][3]float64{{1, 0, 1}, {2, 1, 3}, {5, -4, 0.1}, {0, 0, 0}, {1e5, 30, 0.03}} {
		var es mat.EigenSym
		if !es.Factorize(mat.NewSymDense(2, []float64{m[0], m[1], m[1], m[2]}), false) {
			t.Fatal("gonum factorisation failed")
		}
		vals := es.Values(nil)
		want := math.Max(vals[0], vals[1])
		if got := MaxEigen(m[0], m[1], m[2]); math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
			t.Errorf("MaxEigen%v = %g, gonum %g", m, got, want)
		}
	}
}

// TestMetricStrengthScale: rescaling axis a by s_a multiplies g_ab by
// s_a s_b (the metric is a rank-2 tensor; common practice).
func TestMetricStrengthScale(t *testing.T) {
	got, err := MetricStrength([]float64{4}, []float64{0}, []float64{1}, []float64{0.5, 3})
	if err != nil {
		t.Fatal(err)
	}
	if want := 9.0; math.Abs(got[0]-want) > 1e-12 { // max(0.25·4, 9·1)
		t.Errorf("scaled λ_max = %g, want %g", got[0], want)
	}
	if _, err := MetricStrength([]float64{1}, []float64{0}, []float64{1}, []float64{0, 1}); err == nil {
		t.Error("a zero scale was accepted")
	}
}

// threePhase is a worked example with known answer: a map with ridges of
// Lorentzian profile on the lines x1 = 0 (for x0 < 1) and x0 = 1, which
// meet in a T-junction as the XY chain's boundaries do, with multiplicative
// noise. The exact regions are x0 > 1, and x0 < 1 split by x1 = 0.
func threePhase(g Grid, noise float64, rng *rand.Rand) []float64 {
	v := make([]float64, g.K())
	for k := range v {
		p := g.Point(k)
		s := 1 + 40/(1+math.Pow((p[0]-1)/0.08, 2))
		if p[0] < 1 {
			s += 40 / (1 + math.Pow(p[1]/0.15, 2))
		}
		if rng != nil {
			s *= math.Exp(noise * rng.NormFloat64())
		}
		v[k] = s
	}
	return v
}

func meanDistance(bs []Boundary, d func(p [2]float64) float64) (float64, int) {
	s, n := 0.0, 0
	for _, b := range bs {
		for _, p := range b.Points {
			s += d(p)
			n++
		}
	}
	return s / float64(n), n
}

func TestSegmentThreePhases(t *testing.T) {
	g := Grid{X0: linspace(0.2, 1.8, 9), X1: linspace(-1, 1, 9)}
	for _, tc := range []struct {
		name  string
		noise float64
	}{{"clean", 0}, {"20% noise", 0.2}} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(1, 2))
			v := threePhase(g, tc.noise, rng)
			var reps [][]float64
			for b := 0; b < 30; b++ {
				r := make([]float64, len(v))
				for k := range r {
					r[k] = v[k] * math.Exp(tc.noise*rng.NormFloat64())
				}
				reps = append(reps, r)
			}
			seg, err := Segment(g, v, reps, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if seg.Count != 3 {
				t.Fatalf("found %d phases, want 3; labels %v", seg.Count, seg.Labels)
			}
			// Points well inside each exact region share a label, and the
			// three regions have different labels.
			at := func(x0, x1 float64) int {
				best, bd := 0, math.Inf(1)
				for k := 0; k < g.K(); k++ {
					p := g.Point(k)
					if d := math.Hypot(p[0]-x0, p[1]-x1); d < bd {
						best, bd = k, d
					}
				}
				return seg.Labels[best]
			}
			a, b, c := at(0.4, -0.75), at(0.4, 0.75), at(1.6, 0)
			if a == b || b == c || a == c || at(0.6, -0.5) != a || at(0.6, 0.5) != b || at(1.4, -0.75) != c {
				t.Errorf("regions do not follow the ridges: labels %v", seg.Labels)
			}
			bs, err := Boundaries(g, v, reps, nil, seg)
			if err != nil {
				t.Fatal(err)
			}
			dist := func(p [2]float64) float64 {
				d := math.Abs(p[0]-1) / 1.6
				if p[0] < 1 {
					d = math.Min(d, math.Abs(p[1])/2)
				}
				return d
			}
			m, n := meanDistance(bs, dist)
			if n < 9 || m > 0.05 {
				t.Errorf("%d boundary points, mean distance %.3g of the range from the true lines, want ≤ 0.05", n, m)
			}
			t.Logf("%d phases, %d boundaries, %d points, mean distance %.3g", seg.Count, len(bs), n, m)
		})
	}
}

// TestSegmentFlatNoise: a map without a ridge (pure noise around a constant)
// is one phase.
func TestSegmentFlatNoise(t *testing.T) {
	g := Grid{X0: linspace(0, 1, 9), X1: linspace(0, 1, 9)}
	rng := rand.New(rand.NewPCG(3, 4))
	v := make([]float64, g.K())
	for k := range v {
		v[k] = 5 * math.Exp(0.2*rng.NormFloat64())
	}
	seg, err := Segment(g, v, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if seg.Count != 1 {
		t.Errorf("noise split into %d phases: %v", seg.Count, seg.Labels)
	}
}

// TestOnsagerContour: the zero line of Onsager's condition passes through
// the isotropic critical point T_c = 2/ln(1+√2) = 2.269185… at Jx = Jy = 1
// (L. Onsager, Phys. Rev. 65, 117 (1944)).
func TestOnsagerContour(t *testing.T) {
	cs := Contour(func(T, Jy float64) float64 { return OnsagerCritical(T, 1, Jy) }, 1, 4, 0.5, 1.5, 200, "Onsager")
	if len(cs) != 1 {
		t.Fatalf("%d contour lines, want 1", len(cs))
	}
	tc := 2 / math.Log(1+math.Sqrt2)
	best := math.Inf(1)
	for _, p := range cs[0].Points {
		// every point satisfies Jy = (T/2)·asinh(1/sinh(2/T)), the closed form
		if w := p[0] / 2 * math.Asinh(1/math.Sinh(2/p[0])); math.Abs(p[1]-w) > 1e-3 {
			t.Fatalf("contour point %v, closed form Jy = %g", p, w)
		}
		if math.Abs(p[1]-1) < 0.01 {
			best = math.Min(best, math.Abs(p[0]-tc))
		}
	}
	if best > 0.02 {
		t.Errorf("contour misses T_c = %.6f at Jy = 1 by %g", tc, best)
	}
}

func TestReadReference(t *testing.T) {
	for _, tc := range []struct {
		name, in string
		n        int
		first    [2]float64
		err      string
	}{
		{"plain", "1,2\n3,4\n\n5,6\n7,8\n", 2, [2]float64{1, 2}, ""},
		{"header", "T,Jy\n1,2\n3,4\n", 1, [2]float64{1, 2}, ""},
		{"swapped header", "Jy,T\n1,2\n3,4\n", 1, [2]float64{2, 1}, ""},
		{"names", "# exact\n1,2,a\n3,4,a\n5,6,b\n", 2, [2]float64{1, 2}, ""},
		{"bad header", "h,J\n1,2\n", 0, [2]float64{}, "names parameters h,J"},
		{"bad number", "1,2\n3,x\n", 0, [2]float64{}, "ref.csv:2: expected two numbers"},
		{"fields", "1\n", 0, [2]float64{}, "found 1 fields"},
		{"empty", "# nothing\n", 0, [2]float64{}, "found none"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cs, err := ReadReference(strings.NewReader(tc.in), []string{"T", "Jy"}, "ref.csv")
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("error %v, want one containing %q", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if len(cs) != tc.n || cs[0].Points[0] != tc.first {
				t.Errorf("curves %+v, want %d starting at %v", cs, tc.n, tc.first)
			}
		})
	}
}

// TestBoundaryErrorsFromMembers: with maps of several sources whose ridge
// is displaced by ±δ along axis 0, the boundary points' errors along axis 0
// are of order δ (the spread across sources), and zero without them.
func TestBoundaryErrorsFromMembers(t *testing.T) {
	g := Grid{X0: linspace(0, 2, 21), X1: linspace(0, 1, 5)}
	ridge := func(c float64) []float64 {
		v := make([]float64, g.K())
		for k := range v {
			p := g.Point(k)
			v[k] = 1 + 50/(1+math.Pow((p[0]-c)/0.15, 2))
		}
		return v
	}
	v := ridge(1.03)
	seg, err := Segment(g, v, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if seg.Count != 2 {
		t.Fatalf("%d phases, want 2", seg.Count)
	}
	none, err := Boundaries(g, v, nil, nil, seg)
	if err != nil {
		t.Fatal(err)
	}
	members := [][]float64{ridge(0.98), ridge(1.03), ridge(1.08)}
	with, err := Boundaries(g, v, nil, members, seg)
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range with[0].Points {
		e := with[0].Err[i][0]
		if math.Abs(p[0]-1.03) > 0.02 || e < 0.02 || e > 0.1 || none[0].Err[i][0] != 0 {
			t.Errorf("point %v error %g (without members %g), want near 1.03 with an error of order 0.05", p, e, none[0].Err[i][0])
		}
	}
}
