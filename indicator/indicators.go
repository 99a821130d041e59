package indicator

import (
	"fmt"
	"math"
)

// Names of the indicators, in the order they are reported.
const (
	LBC    = "lbc"
	SL     = "sl"
	PBM    = "pbm"
	Local  = "local"
	Fisher = "fisher"
)

// AllIndicators lists every indicator name accepted by Config.Indicators.
var AllIndicators = []string{SL, LBC, PBM, Local, Fisher}

// Layout is a product grid of parameter points: point k has per-axis
// indices given by the mixed-radix digits of k, the last axis varying
// fastest (the order of data.Grid on a product grid).
type Layout struct {
	// Names are the axis (parameter) names.
	Names []string
	// Axes holds the ascending values of each axis.
	Axes [][]float64
}

// K returns the number of points.
func (lo *Layout) K() int {
	n := 1
	for _, a := range lo.Axes {
		n *= len(a)
	}
	return n
}

// Dim returns the number of axes.
func (lo *Layout) Dim() int { return len(lo.Axes) }

// Digits returns the per-axis indices of point k.
func (lo *Layout) Digits(k int) []int {
	d := make([]int, len(lo.Axes))
	for a := len(lo.Axes) - 1; a >= 0; a-- {
		d[a] = k % len(lo.Axes[a])
		k /= len(lo.Axes[a])
	}
	return d
}

// Index returns the point with per-axis indices d.
func (lo *Layout) Index(d []int) int {
	k := 0
	for a := range lo.Axes {
		k = k*len(lo.Axes[a]) + d[a]
	}
	return k
}

// Point returns the coordinates of point k.
func (lo *Layout) Point(k int) []float64 {
	d := lo.Digits(k)
	p := make([]float64, len(d))
	for a, i := range d {
		p[a] = lo.Axes[a][i]
	}
	return p
}

// Points returns all K points in order.
func (lo *Layout) Points() [][]float64 {
	ps := make([][]float64, lo.K())
	for k := range ps {
		ps[k] = lo.Point(k)
	}
	return ps
}

// gridLine is a line of points along one axis, the other indices fixed.
type gridLine struct {
	axis  int
	pts   []int     // point indices in ascending order along axis
	x     []float64 // their coordinates along axis
	fixed []int     // the digits of the first point (the axis digit is 0)
}

// lines returns every line along axis a.
func (lo *Layout) lines(a int) []gridLine {
	var out []gridLine
	for k := 0; k < lo.K(); k++ {
		d := lo.Digits(k)
		if d[a] != 0 {
			continue
		}
		ln := gridLine{axis: a, fixed: d}
		for i, x := range lo.Axes[a] {
			dd := append([]int(nil), d...)
			dd[a] = i
			ln.pts = append(ln.pts, lo.Index(dd))
			ln.x = append(ln.x, x)
		}
		out = append(out, ln)
	}
	return out
}

// Line is a sequence of a curve's positions ordered along one axis, the
// other coordinates fixed: peaks are looked for along lines.
type Line struct {
	// Axis is the axis the line runs along.
	Axis int
	// Idx lists positions of the curve in ascending order along Axis.
	Idx []int
}

// Curve is one indicator's values at a set of positions, with errors.
type Curve struct {
	// Name is the column name ("lbc", or "lbc_T" for a 2-D per-axis curve).
	Name string
	// Indicator is the indicator it belongs to ("lbc", …, "fisher").
	Indicator string
	// Placement says where the positions lie: "midpoints" (between
	// neighbouring grid points along Axis) or "points" (at grid points).
	Placement string
	// Axis is the axis of a per-axis curve, or −1 when the curve is a map at
	// grid points (fisher_deriv trace, pbm divergence in 2-D).
	Axis int
	// Pos holds the parameter coordinates of each position.
	Pos [][]float64
	// Val and Err are the values and their standard errors.
	Val, Err []float64
	// Lines are the lines along which peaks are sought.
	Lines []Line
	// Peaks are the peaks found along Lines.
	Peaks []Peak
	// reps holds the bootstrap replicates, reps[b][t].
	reps [][]float64
	// srcs holds each source's values when several are combined.
	srcs [][]float64
	// unseenChecked: the peaks were compared with the curve on the unseen
	// snapshots; unseenFar lists that curve's peaks far from every peak.
	unseenChecked bool
	unseenFar     []Peak
}

// curveSpec is a curve before evaluation: its stat and geometry.
type curveSpec struct {
	Curve
	st    *stat
	deriv bool // the stat reads the derivative EvalSet, not the main one
}

// buildOptions controls which curves buildCurves makes.
type buildOptions struct {
	indicators map[string]bool
	window     int
	slRegions  *SLRegions
	deriv      *EvalSet // the samples and gradients of fisher_deriv (nil: none)
}

// SLRegions are the two end regions of the sl indicator, as closed
// intervals of the scanned axis.
type SLRegions struct {
	A, B [2]float64
}

func axisSuffix(lo *Layout, a int) string {
	if lo.Dim() == 1 {
		return ""
	}
	return "_" + lo.Names[a]
}

func mid(a, b float64) float64 { return (a + b) / 2 }

// buildCurves lays out every requested curve of an EvalSet on layout lo.
// Curves of a 1-D layout are plain; a 2-D layout gets per-axis curves along
// every line for sl, lbc, local and fisher, the pbm divergence at interior
// points and the derivative Fisher metric at points.
func buildCurves(lo *Layout, ev *EvalSet, opt buildOptions) ([]*curveSpec, error) {
	var out []*curveSpec
	d := lo.Dim()
	for a := 0; a < d; a++ {
		lines := lo.lines(a)
		suf := axisSuffix(lo, a)
		if opt.indicators[SL] {
			c, err := slCurve(lo, ev, a, lines, opt.slRegions)
			if err != nil {
				return nil, err
			}
			c.Name = SL + suf
			out = append(out, c)
		}
		if opt.indicators[LBC] {
			c := lineCurve(lo, a, lines, ev, lbcLine)
			c.Name, c.Indicator = LBC+suf, LBC
			out = append(out, c)
		}
		if opt.indicators[PBM] && d == 1 {
			c := lineCurve(lo, a, lines, ev, pbmLine)
			c.Name, c.Indicator = PBM, PBM
			out = append(out, c)
		}
		if opt.indicators[Local] {
			w := opt.window
			if w < 1 {
				w = 1
			}
			if 2*w > len(lo.Axes[a]) {
				return nil, fmt.Errorf("local indicator: window %d needs at least %d points along %s, the grid has %d", w, 2*w, lo.Names[a], len(lo.Axes[a]))
			}
			c := lineCurve(lo, a, lines, ev, func(ev *EvalSet, ln gridLine) (*stat, []int) { return localLine(ev, ln, w) })
			c.Name, c.Indicator = Local+suf, Local
			out = append(out, c)
		}
		if opt.indicators[Fisher] {
			c := lineCurve(lo, a, lines, ev, jsdLine)
			c.Name, c.Indicator = Fisher+suf, Fisher
			out = append(out, c)
		}
	}
	if opt.indicators[PBM] && d == 2 {
		out = append(out, pbmDivergence(lo, ev))
	}
	if opt.indicators[Fisher] && d == 2 {
		out = append(out, jsdTrace(lo, ev))
	}
	if opt.indicators[Fisher] && opt.deriv != nil {
		for _, c := range fisherDeriv(lo, opt.deriv) {
			c.deriv = true
			out = append(out, c)
		}
	}
	return out, nil
}

// lineCurve builds a per-axis curve from a per-line stat builder that returns
// a stat with one output per cut and, for each output, the index t of the
// left point of its cut along the line (positions at midpoints t, t+1).
func lineCurve(lo *Layout, a int, lines []gridLine, ev *EvalSet, mk func(*EvalSet, gridLine) (*stat, []int)) *curveSpec {
	c := &curveSpec{Curve: Curve{Placement: "midpoints", Axis: a}}
	var stats []*stat
	for _, ln := range lines {
		st, cuts := mk(ev, ln)
		line := Line{Axis: a}
		for _, t := range cuts {
			p := lo.Point(ln.pts[t])
			p[a] = mid(ln.x[t], ln.x[t+1])
			line.Idx = append(line.Idx, len(c.Pos))
			c.Pos = append(c.Pos, p)
		}
		c.Lines = append(c.Lines, line)
		stats = append(stats, st)
	}
	c.st = concatStats(stats)
	return c
}

// concatStats joins stats into one whose outputs follow each other.
func concatStats(sts []*stat) *stat {
	out := &stat{}
	type part struct{ c0, c1, o0, o1 int }
	var parts []part
	for _, s := range sts {
		parts = append(parts, part{len(out.cells), len(out.cells) + len(s.cells), out.nOut, out.nOut + s.nOut})
		out.cells = append(out.cells, s.cells...)
		out.nOut += s.nOut
	}
	out.combine = func(e, o []float64) {
		for i, p := range parts {
			sts[i].combine(e[p.c0:p.c1], o[p.o0:p.o1])
		}
	}
	return out
}

// posteriorTable holds, for the samples that matter to a group of points,
// the log-likelihood restricted to the group (rows addressed through pos).
type posteriorTable struct {
	pos []int32   // sample row → table row (−1: not in the table)
	g   []int     // the points of the group
	l   []float64 // rows of len(g) log-likelihoods
	lse []float64 // log Σ_{j∈g} p(x|λ_j)
}

// newPosteriorTable gathers the rows of every sample in a slot of a point
// of g (every state, for exact sums).
func newPosteriorTable(ev *EvalSet, g []int) *posteriorTable {
	key := fmt.Sprint(g)
	if pt, ok := ev.tables[key]; ok {
		return pt
	}
	if ev.tables == nil {
		ev.tables = map[string]*posteriorTable{}
	}
	pt := buildPosteriorTable(ev, g)
	ev.tables[key] = pt
	return pt
}

func buildPosteriorTable(ev *EvalSet, g []int) *posteriorTable {
	pt := &posteriorTable{pos: make([]int32, ev.Mx.M), g: g}
	for i := range pt.pos {
		pt.pos[i] = -1
	}
	K := ev.Mx.K
	add := func(m int) {
		if pt.pos[m] >= 0 {
			return
		}
		pt.pos[m] = int32(len(pt.lse))
		row := ev.Mx.L[m*K : (m+1)*K]
		start := len(pt.l)
		for _, k := range g {
			pt.l = append(pt.l, row[k])
		}
		pt.lse = append(pt.lse, logSumExp(pt.l[start:]))
	}
	for _, k := range g {
		for _, m := range ev.Idx[k] {
			add(m)
		}
		if ev.Exact {
			break // every point lists every state
		}
	}
	return pt
}

// row returns the group log-likelihoods and their log-sum-exp for sample m.
func (pt *posteriorTable) row(m int) ([]float64, float64) {
	r := int(pt.pos[m])
	n := len(pt.g)
	return pt.l[r*n : (r+1)*n], pt.lse[r]
}

// perSample turns a per-sample function into a per-slot one.
func perSample(ev *EvalSet, f func(m int) float64) func(k, i int) float64 {
	return func(k, i int) float64 { return f(ev.Idx[k][i]) }
}

// slotCache evaluates a per-sample f once for every sample in the slots of
// ks (once per state for exact sums, where every point lists every state)
// and returns the per-slot view.
func slotCache(ev *EvalSet, ks []int, f func(m int) float64) func(k, i int) float64 {
	if ev.Exact {
		vals := make([]float64, ev.Mx.M)
		for m := range vals {
			vals[m] = f(m)
		}
		return func(k, i int) float64 { return vals[ev.Idx[k][i]] }
	}
	vals := map[int][]float64{}
	for _, k := range ks {
		if _, ok := vals[k]; ok {
			continue
		}
		v := make([]float64, len(ev.Idx[k]))
		for i, m := range ev.Idx[k] {
			v[i] = f(m)
		}
		vals[k] = v
	}
	return func(k, i int) float64 { return vals[k][i] }
}

// cachedSample evaluates f once per table row and returns the per-slot view.
func cachedSample(ev *EvalSet, pt *posteriorTable, f func(l []float64, lse float64) float64) func(k, i int) float64 {
	vals := make([]float64, len(pt.lse))
	n := len(pt.g)
	for r := range vals {
		vals[r] = f(pt.l[r*n:(r+1)*n], pt.lse[r])
	}
	return perSample(ev, func(m int) float64 { return vals[pt.pos[m]] })
}

func allCuts(n int) []int {
	c := make([]int, n-1)
	for i := range c {
		c[i] = i
	}
	return c
}

// lbcLine is learning by confusion with the Bayes-optimal classifier on one
// line: P_err(t) = (1/n) Σ_k E_k[min(π_A, 1−π_A)], I = 1 − P_err
// (E. P. L. van Nieuwenburg, Y.-H. Liu, S. D. Huber, Nat. Phys. 13, 435 (2017)
// for the method; the Bayes-optimal form uses the exact posterior).
func lbcLine(ev *EvalSet, ln gridLine) (*stat, []int) {
	pt := newPosteriorTable(ev, ln.pts)
	n := len(ln.pts)
	// cumulative posteriors, one row of n−1 per table row
	cum := make([]float64, len(pt.lse)*(n-1))
	for r := range pt.lse {
		l := pt.l[r*n : (r+1)*n]
		s := 0.0
		for t := 0; t < n-1; t++ {
			if !math.IsInf(pt.lse[r], -1) {
				s += math.Exp(l[t] - pt.lse[r])
			}
			cum[r*(n-1)+t] = s
		}
	}
	st := &stat{nOut: n - 1}
	for t := 0; t < n-1; t++ {
		t := t
		st.cells = append(st.cells, cell{ks: ln.pts, f: perSample(ev, func(m int) float64 {
			a := cum[int(pt.pos[m])*(n-1)+t]
			return math.Min(a, 1-a)
		})})
	}
	st.combine = func(e, out []float64) {
		for t := range out {
			out[t] = 1 - e[t]/float64(n)
		}
	}
	return st, allCuts(n)
}

// pbmLine is the prediction-based method with the Bayes-optimal regressor
// ŷ(x) = Σ_k π_k(x) λ_k along one line: I = Δŷ_k/Δλ at midpoints
// (F. Schäfer, N. Lörch, Phys. Rev. E 99, 062107 (2019) for the method).
func pbmLine(ev *EvalSet, ln gridLine) (*stat, []int) {
	pt := newPosteriorTable(ev, ln.pts)
	yhat := cachedSample(ev, pt, func(l []float64, lse float64) float64 {
		s := 0.0
		for j, x := range ln.x {
			s += math.Exp(l[j]-lse) * x
		}
		return s
	})
	n := len(ln.pts)
	st := &stat{nOut: n - 1}
	for _, k := range ln.pts {
		st.cells = append(st.cells, cell{ks: []int{k}, f: yhat})
	}
	st.combine = func(e, out []float64) {
		for t := range out {
			out[t] = (e[t+1] - e[t]) / (ln.x[t+1] - ln.x[t])
		}
	}
	return st, allCuts(n)
}

// slCurve is supervised learning with the Bayes-optimal classifier trained on
// the end regions A and B of each line: ŷ(x) = Σ_A p / Σ_{A∪B} p,
// I = |Δ E_k[ŷ]|/Δλ at midpoints (Carrasquilla and Melko, Nat. Phys. 13, 431
// (2017) for the method).
func slCurve(lo *Layout, ev *EvalSet, a int, lines []gridLine, reg *SLRegions) (*curveSpec, error) {
	var errOut error
	c := lineCurve(lo, a, lines, ev, func(ev *EvalSet, ln gridLine) (*stat, []int) {
		n := len(ln.pts)
		var A, B []int
		if reg != nil {
			for j, x := range ln.x {
				if x >= reg.A[0] && x <= reg.A[1] {
					A = append(A, j)
				} else if x >= reg.B[0] && x <= reg.B[1] {
					B = append(B, j)
				}
			}
			if len(A) == 0 || len(B) == 0 {
				errOut = fmt.Errorf("sl regions %v and %v: expected grid points of %s in each, found %d and %d", reg.A, reg.B, lo.Names[a], len(A), len(B))
			}
		} else {
			e := max(1, int(math.Round(0.1*float64(n))))
			for j := 0; j < e; j++ {
				A = append(A, j)
				B = append(B, n-1-j)
			}
		}
		pt := newPosteriorTable(ev, ln.pts)
		la := make([]float64, len(A))
		lab := make([]float64, len(A)+len(B))
		yhat := cachedSample(ev, pt, func(l []float64, _ float64) float64 {
			for i, j := range A {
				la[i] = l[j]
				lab[i] = l[j]
			}
			for i, j := range B {
				lab[len(A)+i] = l[j]
			}
			den := logSumExp(lab)
			if math.IsInf(den, -1) {
				return 0.5 // impossible under both regions: no information
			}
			return math.Exp(logSumExp(la) - den)
		})
		st := &stat{nOut: n - 1}
		for _, k := range ln.pts {
			st.cells = append(st.cells, cell{ks: []int{k}, f: yhat})
		}
		st.combine = func(e, out []float64) {
			for t := range out {
				out[t] = math.Abs(e[t+1]-e[t]) / (ln.x[t+1] - ln.x[t])
			}
		}
		return st, allCuts(n)
	})
	c.Indicator = SL
	return c, errOut
}

// localLine is the Bayes error between adjacent windows of w points:
// I = 1 − 2 P_err = TV(p_L, p_R) with r = p_R/(p_L+p_R) and
// P_err = ½(E_L[min(r,1−r)] + E_R[min(r,1−r)]).
func localLine(ev *EvalSet, ln gridLine, w int) (*stat, []int) {
	n := len(ln.pts)
	var cuts []int
	st := &stat{}
	for t := w - 1; t+w <= n-1; t++ {
		L := ln.pts[t-w+1 : t+1]
		R := ln.pts[t+1 : t+w+1]
		cuts = append(cuts, t)
		K := ev.Mx.K
		f := slotCache(ev, ln.pts[t-w+1:t+w+1], func(m int) float64 {
			row := ev.Mx.L[m*K : (m+1)*K]
			lL, lR := math.Inf(-1), math.Inf(-1)
			for _, k := range L {
				lL = logAddExp(lL, row[k])
			}
			for _, k := range R {
				lR = logAddExp(lR, row[k])
			}
			den := logAddExp(lL, lR)
			if math.IsInf(den, -1) {
				return 0
			}
			r := math.Exp(lR - den)
			return math.Min(r, 1-r)
		})
		st.cells = append(st.cells, cell{ks: L, f: f}, cell{ks: R, f: f})
	}
	st.nOut = len(cuts)
	st.combine = func(e, out []float64) {
		for t := range out {
			perr := 0.5 * (e[2*t]/float64(w) + e[2*t+1]/float64(w))
			out[t] = 1 - 2*perr
		}
	}
	return st, cuts
}

// jsdLine estimates the Fisher information at midpoints from the
// Jensen–Shannon divergence of neighbours, F ≈ 8·JSD/Δλ² (JSD ≈ F Δλ²/8 to
// second order, common practice).
func jsdLine(ev *EvalSet, ln gridLine) (*stat, []int) {
	n := len(ln.pts)
	K := ev.Mx.K
	st := &stat{nOut: n - 1}
	for t := 0; t < n-1; t++ {
		st.cells = append(st.cells, jsdCells(ev, K, ln.pts[t], ln.pts[t+1])...)
	}
	st.combine = func(e, out []float64) {
		for t := range out {
			dx := ln.x[t+1] - ln.x[t]
			jsd := 0.5 * (e[2*t] + e[2*t+1])
			out[t] = 8 * jsd / (dx * dx)
		}
	}
	return st, allCuts(n)
}

// jsdCells returns the two expectations whose mean is JSD(p_a, p_b):
// E_a[log(2p_a/(p_a+p_b))] and E_b[log(2p_b/(p_a+p_b))].
func jsdCells(ev *EvalSet, K, ka, kb int) []cell {
	fa := perSample(ev, func(m int) float64 {
		la, lb := ev.Mx.L[m*K+ka], ev.Mx.L[m*K+kb]
		if math.IsInf(la, -1) {
			return 0
		}
		return math.Ln2 + la - logAddExp(la, lb)
	})
	fb := perSample(ev, func(m int) float64 {
		la, lb := ev.Mx.L[m*K+ka], ev.Mx.L[m*K+kb]
		if math.IsInf(lb, -1) {
			return 0
		}
		return math.Ln2 + lb - logAddExp(la, lb)
	})
	return []cell{{ks: []int{ka}, f: fa}, {ks: []int{kb}, f: fb}}
}

// jsdTrace is the 2-D map of the trace of the Fisher metric from neighbour
// Jensen–Shannon divergences, at the centres of the grid's cells: F_aa at a
// centre is the mean of 8·JSD/Δ_a² over the cell's two edges along axis a.
func jsdTrace(lo *Layout, ev *EvalSet) *curveSpec {
	n0, n1 := len(lo.Axes[0]), len(lo.Axes[1])
	K := lo.K()
	st := &stat{}
	// edge e0(i,j): (i,j)–(i+1,j); edge e1(i,j): (i,j)–(i,j+1)
	e0 := func(i, j int) int { return i*n1 + j }
	e1 := func(i, j int) int { return (n0-1)*n1 + i*(n1-1) + j }
	for i := 0; i+1 < n0; i++ {
		for j := 0; j < n1; j++ {
			st.cells = append(st.cells, jsdCells(ev, K, lo.Index([]int{i, j}), lo.Index([]int{i + 1, j}))...)
		}
	}
	for i := 0; i < n0; i++ {
		for j := 0; j+1 < n1; j++ {
			st.cells = append(st.cells, jsdCells(ev, K, lo.Index([]int{i, j}), lo.Index([]int{i, j + 1}))...)
		}
	}
	c := &curveSpec{Curve: Curve{Name: Fisher, Indicator: Fisher, Placement: "cell centres", Axis: -1}}
	for i := 0; i+1 < n0; i++ {
		for j := 0; j+1 < n1; j++ {
			c.Pos = append(c.Pos, []float64{mid(lo.Axes[0][i], lo.Axes[0][i+1]), mid(lo.Axes[1][j], lo.Axes[1][j+1])})
		}
	}
	st.nOut = len(c.Pos)
	st.combine = func(e, out []float64) {
		f := func(edge int, dx float64) float64 { return 8 * 0.5 * (e[2*edge] + e[2*edge+1]) / (dx * dx) }
		for i := 0; i+1 < n0; i++ {
			d0 := lo.Axes[0][i+1] - lo.Axes[0][i]
			for j := 0; j+1 < n1; j++ {
				d1 := lo.Axes[1][j+1] - lo.Axes[1][j]
				f00 := 0.5 * (f(e0(i, j), d0) + f(e0(i, j+1), d0))
				f11 := 0.5 * (f(e1(i, j), d1) + f(e1(i+1, j), d1))
				out[i*(n1-1)+j] = f00 + f11
			}
		}
	}
	c.st = st
	for j := 0; j+1 < n1; j++ {
		l := Line{Axis: 0}
		for i := 0; i+1 < n0; i++ {
			l.Idx = append(l.Idx, i*(n1-1)+j)
		}
		c.Lines = append(c.Lines, l)
	}
	for i := 0; i+1 < n0; i++ {
		l := Line{Axis: 1}
		for j := 0; j+1 < n1; j++ {
			l.Idx = append(l.Idx, i*(n1-1)+j)
		}
		c.Lines = append(c.Lines, l)
	}
	return c
}

// pbmDivergence is the 2-D prediction-based indicator: the divergence
// Σ_i ∂ŷ_i/∂λ_i of the Bayes-optimal regressor's mean prediction, by central
// differences at interior points.
func pbmDivergence(lo *Layout, ev *EvalSet) *curveSpec {
	K := lo.K()
	all := make([]int, K)
	for k := range all {
		all[k] = k
	}
	pts := lo.Points()
	pt := newPosteriorTable(ev, all)
	st := &stat{}
	for a := 0; a < 2; a++ {
		yhat := cachedSample(ev, pt, func(l []float64, lse float64) float64 {
			s := 0.0
			for j := range l {
				s += math.Exp(l[j]-lse) * pts[j][a]
			}
			return s
		})
		for k := 0; k < K; k++ {
			st.cells = append(st.cells, cell{ks: []int{k}, f: yhat})
		}
	}
	c := &curveSpec{Curve: Curve{Name: PBM, Indicator: PBM, Placement: "points", Axis: -1}}
	var interior []int
	for k := 0; k < K; k++ {
		d := lo.Digits(k)
		if d[0] > 0 && d[0] < len(lo.Axes[0])-1 && d[1] > 0 && d[1] < len(lo.Axes[1])-1 {
			interior = append(interior, k)
		}
	}
	pos := map[int]int{}
	for i, k := range interior {
		pos[k] = i
		c.Pos = append(c.Pos, pts[k])
	}
	st.nOut = len(interior)
	st.combine = func(e, out []float64) {
		for i, k := range interior {
			d := lo.Digits(k)
			div := 0.0
			for a := 0; a < 2; a++ {
				up := append([]int(nil), d...)
				dn := append([]int(nil), d...)
				up[a]++
				dn[a]--
				ku, kd := lo.Index(up), lo.Index(dn)
				div += (e[a*K+ku] - e[a*K+kd]) / (lo.Axes[a][up[a]] - lo.Axes[a][dn[a]])
			}
			out[i] = div
		}
	}
	c.st = st
	c.Lines = mapLines(lo, pos)
	return c
}

// mapLines returns the lines, in both orientations, through the positions
// of a map at grid points (pos maps point index → position).
func mapLines(lo *Layout, pos map[int]int) []Line {
	var out []Line
	for a := 0; a < lo.Dim(); a++ {
		for _, ln := range lo.lines(a) {
			l := Line{Axis: a}
			for _, k := range ln.pts {
				if p, ok := pos[k]; ok {
					l.Idx = append(l.Idx, p)
				}
			}
			if len(l.Idx) >= 3 {
				out = append(out, l)
			}
		}
	}
	return out
}

// fisherDeriv is the Fisher information (1-D) or metric (2-D) at grid
// points from ∂_λ log p: F_ab = E_k[∂_a log p ∂_b log p]. In 2-D the curve
// "fisher_deriv" is the trace; the components follow as separate curves.
func fisherDeriv(lo *Layout, ev *EvalSet) []*curveSpec {
	d := lo.Dim()
	K := lo.K()
	pts := lo.Points()
	pos := map[int]int{}
	for k := 0; k < K; k++ {
		pos[k] = k
	}
	mk := func(name string, comps [][2]int) *curveSpec {
		st := &stat{nOut: K}
		for _, ab := range comps {
			a, b := ab[0], ab[1]
			for k := 0; k < K; k++ {
				st.cells = append(st.cells, cell{ks: []int{k}, f: func(k, i int) float64 {
					g := ev.Grad[k][i*d : (i+1)*d]
					return g[a] * g[b]
				}})
			}
		}
		nc := len(comps)
		st.combine = func(e, out []float64) {
			for k := range out {
				s := 0.0
				for c := 0; c < nc; c++ {
					s += e[c*K+k]
				}
				out[k] = s
			}
		}
		c := &curveSpec{Curve: Curve{Name: name, Indicator: Fisher, Placement: "points", Axis: -1, Pos: pts}, st: st}
		c.Lines = mapLines(lo, pos)
		return c
	}
	if d == 1 {
		return []*curveSpec{mk("fisher_deriv", [][2]int{{0, 0}})}
	}
	var comps [][2]int
	for a := 0; a < d; a++ {
		comps = append(comps, [2]int{a, a})
	}
	out := []*curveSpec{mk("fisher_deriv", comps)}
	for a := 0; a < d; a++ {
		for b := a; b < d; b++ {
			c := mk(fmt.Sprintf("fisher_deriv_%s_%s", lo.Names[a], lo.Names[b]), [][2]int{{a, b}})
			c.Lines = nil // components are reported, not searched for peaks
			out = append(out, c)
		}
	}
	return out
}
