package indicator

import (
	"fmt"
	"math"

	"tidemark/indicator/phases"
)

// PhaseDiagram is the phase diagram of a 2-D scan: one boundary-strength map
// per indicator, each segmented into phases, and reference lines to draw
// beside them.
type PhaseDiagram struct {
	// Maps holds one map per indicator; Maps[Primary] is the one reported
	// as the scan's phases.
	Maps    []PhaseMap
	Primary int
	// Scale is the per-axis unit s_a of the metric (Config.MetricScale).
	Scale []float64
	// References are known lines (exact boundaries, user files).
	References []phases.Curve
}

// PhaseMap is one indicator's boundary strength at the scanned grid's
// points with the phases and boundaries found from it.
type PhaseMap struct {
	// Indicator is the indicator's name; Invariant says what the map shows.
	Indicator, Invariant string
	// Strength and Err are the map's values and standard errors at the K
	// points of Result.Layout.
	Strength, Err []float64
	// Phases is the segmentation into phases.
	Phases *phases.Segmentation
	// Boundaries are the polylines between phases.
	Boundaries []phases.Boundary
	// Refined and RefinedStrength are the points a 2-D refinement inserted
	// near the boundaries and the map's value there (nil without one).
	Refined         [][2]float64
	RefinedStrength []float64

	perPoint      bool        // the map is defined point by point (the metric from ∂λ log p)
	reps, members [][]float64 // the map's bootstrap replicas and per-source maps
}

// phaseDiagram builds the phase maps of a 2-D scan from its curves: for
// fisher the largest eigenvalue of the metric from ∂λ log p when the
// source has it (fisher_deriv_*), else the largest diagonal element from
// neighbour divergences (fisher_<axis>); for local, lbc and sl the larger
// of the per-axis neighbour contrasts at each point. pbm's 2-D divergence
// changes sign across a boundary and is not a strength: it gets no map.
func phaseDiagram(res *Result, cfg Config) (*PhaseDiagram, error) {
	lo := res.Layout
	if len(lo.Axes) != 2 || len(lo.Axes[0]) < 3 || len(lo.Axes[1]) < 3 {
		// A line of points, or a 2-wide strip, has no interior to divide.
		return nil, nil
	}
	g := phases.Grid{X0: lo.Axes[0], X1: lo.Axes[1]}
	scale := cfg.MetricScale
	if scale == nil {
		scale = []float64{1, 1}
	}
	if len(scale) != 2 || !(scale[0] > 0) || !(scale[1] > 0) {
		return nil, fmt.Errorf("scan: metric scale %v, expected two positive numbers", scale)
	}
	pd := &PhaseDiagram{Scale: scale, Primary: -1}
	byName := map[string]*Curve{}
	for _, c := range res.Curves {
		byName[c.Name] = c
	}
	// maps returns the value map, its replicas and its per-source maps.
	type built struct {
		inv          string
		val          []float64
		reps, member [][]float64
		perPoint     bool
	}
	series := func(c *Curve) (val []float64, reps, members [][]float64) {
		return c.Val, c.reps, c.srcs
	}
	edgeMap := func(c0, c1 *Curve, w0, w1 float64) (*built, error) {
		b := &built{}
		one := func(v0, v1 []float64) ([]float64, error) {
			e0, e1, err := edges(&lo, c0, v0, c1, v1)
			if err != nil {
				return nil, err
			}
			return phases.EdgeStrength(g, e0, e1, w0, w1)
		}
		v0, r0, m0 := series(c0)
		v1, r1, m1 := series(c1)
		var err error
		if b.val, err = one(v0, v1); err != nil {
			return nil, err
		}
		for i := range r0 {
			if i < len(r1) {
				m, err := one(r0[i], r1[i])
				if err != nil {
					return nil, err
				}
				b.reps = append(b.reps, m)
			}
		}
		for i := range m0 {
			if i < len(m1) {
				m, err := one(m0[i], m1[i])
				if err != nil {
					return nil, err
				}
				b.member = append(b.member, m)
			}
		}
		return b, nil
	}
	suffix := func(a int) string { return axisSuffix(&lo, a) }
	for _, ind := range []string{Fisher, Local, LBC, SL} {
		var b *built
		var err error
		switch {
		case ind == Fisher && byName[fmt.Sprintf("fisher_deriv_%s_%s", lo.Names[0], lo.Names[0])] != nil:
			c00 := byName[fmt.Sprintf("fisher_deriv_%s_%s", lo.Names[0], lo.Names[0])]
			c01 := byName[fmt.Sprintf("fisher_deriv_%s_%s", lo.Names[0], lo.Names[1])]
			c11 := byName[fmt.Sprintf("fisher_deriv_%s_%s", lo.Names[1], lo.Names[1])]
			if c01 == nil || c11 == nil || len(c00.Val) != g.K() {
				continue
			}
			b = &built{perPoint: true, inv: fmt.Sprintf("largest eigenvalue of the Fisher metric from ∂λ log p, per squared unit (%s: %g, %s: %g)", lo.Names[0], scale[0], lo.Names[1], scale[1])}
			if b.val, err = phases.MetricStrength(c00.Val, c01.Val, c11.Val, scale); err != nil {
				return nil, err
			}
			for i := range c00.reps {
				m, err := phases.MetricStrength(c00.reps[i], c01.reps[i], c11.reps[i], scale)
				if err != nil {
					return nil, err
				}
				b.reps = append(b.reps, m)
			}
			for i := range c00.srcs {
				m, err := phases.MetricStrength(c00.srcs[i], c01.srcs[i], c11.srcs[i], scale)
				if err != nil {
					return nil, err
				}
				b.member = append(b.member, m)
			}
		default:
			c0, c1 := byName[ind+suffix(0)], byName[ind+suffix(1)]
			if c0 == nil || c1 == nil || c0.Placement != "midpoints" || c1.Placement != "midpoints" {
				continue
			}
			w0, w1 := 1.0, 1.0
			inv := map[string]string{
				Local: "larger per-axis total-variation distance of neighbouring points (dimensionless)",
				LBC:   "larger per-axis learning-by-confusion accuracy 1 − P_err (dimensionless)",
				SL:    "larger per-axis supervised-learning slope |dŷ/dλ|",
			}[ind]
			if ind == Fisher {
				w0, w1 = scale[0]*scale[0], scale[1]*scale[1]
				inv = fmt.Sprintf("largest diagonal element of the Fisher metric from neighbour divergences, per squared unit (%s: %g, %s: %g)", lo.Names[0], scale[0], lo.Names[1], scale[1])
			}
			if b, err = edgeMap(c0, c1, w0, w1); err != nil {
				return nil, err
			}
			b.inv = inv
		}
		seg, err := phases.Segment(g, b.val, append(append([][]float64(nil), b.reps...), memberReps(b.member)...), phases.Options{})
		if err != nil {
			return nil, fmt.Errorf("scan: phases of %s: %w", ind, err)
		}
		bds, err := phases.Boundaries(g, b.val, b.reps, b.member, seg)
		if err != nil {
			return nil, fmt.Errorf("scan: boundaries of %s: %w", ind, err)
		}
		pm := PhaseMap{Indicator: ind, Invariant: b.inv, Strength: b.val, Err: make([]float64, len(b.val)), Phases: seg, Boundaries: bds, perPoint: b.perPoint, reps: b.reps, members: b.member}
		col := make([]float64, 0, len(b.reps))
		for k := range pm.Err {
			col = col[:0]
			for _, r := range b.reps {
				col = append(col, r[k])
			}
			e := stdDev(col)
			col = col[:0]
			for _, r := range b.member {
				col = append(col, r[k])
			}
			e2 := stdDev(col)
			pm.Err[k] = math.Sqrt(e*e + e2*e2)
		}
		if ind == Fisher || pd.Primary < 0 {
			pd.Primary = len(pd.Maps)
		}
		pd.Maps = append(pd.Maps, pm)
	}
	if len(pd.Maps) == 0 {
		return nil, nil
	}
	return pd, nil
}

// memberReps returns the per-source maps as replicas for the segmentation's
// noise test when there are several sources.
func memberReps(m [][]float64) [][]float64 {
	if len(m) < 2 {
		return nil
	}
	return m
}

// edges places the values of two per-axis midpoint curves on the grid's
// edges (phases' edge order): a curve position at the midpoint of points
// (i,j) and (i+1,j) fills edge i·n1+j of axis 0. Edges without a value
// (the ends of a wide local window) are NaN.
func edges(lo *Layout, c0 *Curve, v0 []float64, c1 *Curve, v1 []float64) ([]float64, []float64, error) {
	n0, n1 := len(lo.Axes[0]), len(lo.Axes[1])
	e0 := make([]float64, (n0-1)*n1)
	e1 := make([]float64, n0*(n1-1))
	for i := range e0 {
		e0[i] = math.NaN()
	}
	for i := range e1 {
		e1[i] = math.NaN()
	}
	locate := func(ax []float64, x float64, mid bool) int {
		for i := range ax {
			if !mid && math.Abs(ax[i]-x) <= 1e-9*math.Max(1, math.Abs(x)) {
				return i
			}
			if mid && i+1 < len(ax) && math.Abs((ax[i]+ax[i+1])/2-x) <= 1e-9*math.Max(1, math.Abs(x)) {
				return i
			}
		}
		return -1
	}
	for t, p := range c0.Pos {
		i, j := locate(lo.Axes[0], p[0], true), locate(lo.Axes[1], p[1], false)
		if i < 0 || j < 0 {
			return nil, nil, fmt.Errorf("scan: %s position %v is not a midpoint along %s", c0.Name, p, lo.Names[0])
		}
		e0[i*n1+j] = v0[t]
	}
	for t, p := range c1.Pos {
		i, j := locate(lo.Axes[0], p[0], false), locate(lo.Axes[1], p[1], true)
		if i < 0 || j < 0 {
			return nil, nil, fmt.Errorf("scan: %s position %v is not a midpoint along %s", c1.Name, p, lo.Names[1])
		}
		e1[i*(n1-1)+j] = v1[t]
	}
	return e0, e1, nil
}
