package indicator

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"tidemark/data/density"

	"tidemark/data"
)

// Caution is printed with every scan's results (design: indicators.md).
const Caution = "An indicator peak marks where the snapshot distribution changes fastest. In a finite system that can be a crossover rather than a transition; compare several system sizes before calling it a transition, and check the model's fit at each point (held-out likelihood, `check`) before trusting model-based indicators."

// maxExactEntries bounds the exact-sum matrix (states × points): about
// 800 MB of log-likelihoods plus as much again for the weights.
const maxExactEntries = 100_000_000

// Config controls a scan.
type Config struct {
	// Indicators names the indicators to compute (nil: all).
	Indicators []string
	// Refine R > 1 inserts R−1 points between neighbours, with ModelSamples
	// snapshots drawn from the source at each inserted point: on a 1-D grid
	// between every pair of neighbours, on a 2-D grid only on the grid
	// edges a boundary crosses (see refineRidges).
	// On a refined or zoomed grid a Sampler source draws its own snapshots at
	// the data's grid points too (unless DataAtGridPoints), so that every
	// point of the curve is estimated the same way: mixing data snapshots at
	// some points with model snapshots at their neighbours puts the model's
	// misfit into the differences between neighbours and makes a saw-tooth
	// of local and fisher.
	Refine int
	// DataAtGridPoints keeps the data snapshots at the data's grid points of a
	// refined grid instead of drawing model snapshots there.
	DataAtGridPoints bool
	// ModelSamples is the number of snapshots drawn per point from a Sampler
	// (refined and zoom points); ≤ 0 means 1000.
	ModelSamples int
	// Zoom re-scans a finer grid around each peak (Sampler sources, or
	// exact sums): 2R+1 points (R = max(Refine, 2)) over ±1 step of the
	// scanned (refined) grid, along the peak's line on a 2-D grid.
	Zoom bool
	// Bootstrap is the number of bootstrap replicates B (0: no errors).
	Bootstrap int
	// ExactSums replaces sample means by exact sums over all q^N states
	// (Enumerable sources only).
	ExactSums bool
	// Window is the local indicator's window w (≤ 0 means 1).
	Window int
	// SLRegions overrides sl's default end regions (1-D only).
	SLRegions *SLRegions
	// Threads is the number of goroutines for the log-likelihood matrix,
	// the derivatives and the sampling (≤ 0: every CPU, data.Threads).
	Threads int
	// Seed seeds model sampling and bootstrap resampling.
	Seed uint64
	// Unseen marks the dataset's snapshots the model never trained on (its
	// validation split and held-out points; train.UnseenRows), nil when not
	// known or not a model. With a bootstrap, the first pass evaluates every
	// curve on them as well and adds the shift of each peak between the two,
	// beyond sampling noise, to the peak's error (Peak.Unseen).
	Unseen []bool
	// MetricScale is the per-axis unit s_a of a 2-D scan's Fisher-metric
	// map (nil: parameter units): the map shows the metric of λ_a/s_a.
	MetricScale []float64
	// Progress, if not nil, is called before each long stage with its name
	// and number of steps and returns the callback that counts them.
	Progress func(stage string, total int) func(n int)
	// KeepDataLogLik keeps each source's log-likelihoods of the data's
	// snapshots at the data's grid points, as the first pass computed
	// them, for Result.DataLogLik (M·K values per source).
	KeepDataLogLik bool

	// keepLL receives them (set by Run).
	keepLL func(s int, kept *keptLL)
}

// Result is the outcome of a scan.
type Result struct {
	// Names are the parameter names.
	Names []string
	// Data is the dataset grid's layout, Layout the (refined) layout scanned.
	Data, Layout Layout
	// Curves are the indicator curves, combined over sources.
	Curves []*Curve
	// Boundaries are ridge polylines of the local and fisher maps (2-D).
	Boundaries []Boundary
	// Phases is the phase diagram of a 2-D scan (nil in 1-D).
	Phases *PhaseDiagram
	// Exact is a scan of the same data with the exact density, set by the
	// caller to be drawn beside the model's curves (nil: none).
	Exact *Result
	// Zoom holds the results of the finer second pass around peaks.
	Zoom []ZoomResult
	// Sources is the number of sources combined.
	Sources int
	// Bootstrap is the number of replicates used (0 when errors are not
	// from the bootstrap).
	Bootstrap int
	// ExactSums reports exact expectations.
	ExactSums bool
	// UnseenChecked reports that the peaks were compared with the curves on
	// the snapshots the model did not train on (Config.Unseen).
	UnseenChecked bool
	// Notes are warnings about how to read the results.
	Notes []string

	// dataLL[s] is source s's first-pass matrix when it scored the data's
	// snapshots at the data's grid points (Config.KeepDataLogLik).
	dataLL []*keptLL
}

// DataLogLik returns, when the scan kept them (Config.KeepDataLogLik),
// source s's log-likelihood of the dataset's snapshot m at point k of
// data.NewGrid(ds), as the scan computed it; nil when it did not keep them
// (or scored model samples instead of the data).
func (r *Result) DataLogLik(s int) func(m, k int) float64 {
	if s >= len(r.dataLL) || r.dataLL[s] == nil {
		return nil
	}
	kept := r.dataLL[s]
	return func(m, k int) float64 { return kept.mx.At(m, kept.col[k]) }
}

// keptLL is a first-pass matrix over the data's snapshots and the column
// of each data grid point in it.
type keptLL struct {
	mx  *Matrix
	col []int
}

// ZoomResult is the second pass around one peak.
type ZoomResult struct {
	// Around is the first-pass peak position; Layout the zoom grid.
	Around []float64
	// Axis is the axis the zoom window runs along (0 on a 1-D grid).
	Axis   int
	Layout Layout
	// Curves are the zoom-pass curves.
	Curves []*Curve
}

// Run scans the dataset ds with one or more sources (several sources, e.g.
// models trained with different seeds, are averaged and their spread joins
// the errors in quadrature). ds must have a 1-D grid or a 2-D product grid.
// Cancelling ctx stops the scan's workers; Run then returns ctx's error.
func Run(ctx context.Context, sources []density.Source, ds *data.Dataset, cfg Config) (*Result, error) {
	g, ind, cfg, err := checkScan(sources, ds, cfg)
	if err != nil {
		return nil, err
	}
	res := &Result{Names: g.Names, Data: Layout{Names: g.Names, Axes: g.Axes}, Sources: len(sources), ExactSums: cfg.ExactSums}
	if cfg.KeepDataLogLik {
		res.dataLL = make([]*keptLL, len(sources))
		cfg.keepLL = func(s int, kept *keptLL) { res.dataLL[s] = kept }
	}
	res.Layout = res.Data
	if g.Dim() == 1 {
		res.Layout = refineLayout(res.Data, cfg.Refine)
	}
	curves, err := runPass(ctx, sources, ds, g, res.Data, res.Layout, cfg, ind, 0)
	if err != nil {
		return nil, err
	}
	res.Curves = curves
	res.Notes = append(res.Notes, noisyNotes(curves)...)
	far := map[string][]Peak{}
	for _, c := range curves {
		if c.unseenChecked {
			res.UnseenChecked = true
			far[c.Name] = c.unseenFar
		}
	}
	if res.UnseenChecked {
		res.Notes = append(res.Notes, unseenNotes(curves, far, g.Names)...)
		for _, c := range curves {
			if c.Name == "fisher_deriv" && !c.unseenChecked && len(sources) == 1 {
				res.Notes = append(res.Notes, "fisher_deriv is computed from snapshots the model draws itself (refined grid), so the check on unseen snapshots does not apply to it: with one model its error bars are the bootstrap's alone and exclude the model's own error (train --ensemble K adds the spread of members' peaks)")
				break
			}
		}
	} else if cfg.Unseen != nil && cfg.Bootstrap > 0 && !cfg.ExactSums && onDataGrid(res.Layout, g, 0) {
		// (A refined layout reads model samples everywhere: there are no
		// unseen snapshots to compare, and the refinement note says so.)
		res.Notes = append(res.Notes, fmt.Sprintf("the curves were not compared on the snapshots the model did not train on: some grid point has fewer than %d of them", minUnseen))
	}
	res.Bootstrap = scanNotes(res, sources, cfg)
	if g.Dim() == 2 {
		res.Boundaries = curveBoundaries(res.Curves, g.Names)
		if res.Phases, err = phaseDiagram(res, cfg); err != nil {
			return nil, err
		}
		if err := refineRidges(ctx, res, sources, ds, g, cfg); err != nil {
			return nil, err
		}
	}
	if cfg.Zoom {
		if err := zoomPass(ctx, res, sources, ds, g, cfg, ind); err != nil {
			return nil, err
		}
	}
	return res, nil
}

// checkScan is the first stage of Run: it checks the sources, the dataset's
// grid and cfg against each other, and returns the grid, the set of
// indicators to compute and cfg with its defaults filled in.
func checkScan(sources []density.Source, ds *data.Dataset, cfg Config) (*data.Grid, map[string]bool, Config, error) {
	if len(sources) == 0 {
		return nil, nil, cfg, errors.New("scan: no density source")
	}
	g := data.NewGrid(ds)
	if g.K() < 2 {
		return nil, nil, cfg, fmt.Errorf("scan: expected at least 2 grid points, found %d", g.K())
	}
	if g.Dim() > 2 {
		return nil, nil, cfg, fmt.Errorf("scan: expected 1 or 2 parameters, found %d (%v)", g.Dim(), g.Names)
	}
	if !g.Product {
		return nil, nil, cfg, fmt.Errorf("scan: expected a product grid (every combination of %v), found %d points for %v values per axis", g.Names, g.K(), g.Shape())
	}
	for _, s := range sources {
		if s.Sites() != ds.N || s.Alphabet() != ds.Meta.Alphabet || s.ParamDim() != ds.D {
			return nil, nil, cfg, fmt.Errorf("scan: source has %d sites, alphabet %d and %d parameters, the data %d, %d and %d", s.Sites(), s.Alphabet(), s.ParamDim(), ds.N, ds.Meta.Alphabet, ds.D)
		}
	}
	ind := map[string]bool{}
	if len(cfg.Indicators) == 0 {
		cfg.Indicators = AllIndicators
	}
	for _, n := range cfg.Indicators {
		ok := false
		for _, a := range AllIndicators {
			ok = ok || a == n
		}
		if !ok {
			return nil, nil, cfg, fmt.Errorf("scan: unknown indicator %q, expected one of %v", n, AllIndicators)
		}
		ind[n] = true
	}
	if cfg.SLRegions != nil && g.Dim() != 1 {
		return nil, nil, cfg, fmt.Errorf("scan: sl regions are for 1-D grids, the grid has %d axes", g.Dim())
	}
	if cfg.ModelSamples <= 0 {
		cfg.ModelSamples = 1000
	}
	if cfg.Refine < 1 {
		cfg.Refine = 1
	}
	if cfg.ExactSums {
		for _, s := range sources {
			if !density.IsEnumerable(s) {
				return nil, nil, cfg, errors.New("scan: exact sums need a source whose q^N states can all be listed (an exact source or a model of a small system, at most 2^20 states)")
			}
		}
	}
	needSampler := cfg.Refine > 1 && !cfg.ExactSums
	for _, s := range sources {
		if density.IsGridOnly(s) && cfg.Refine > 1 {
			return nil, nil, cfg, errors.New("scan: the histogram is defined only at the grid points; refinement needs a model (train a model)")
		}
		if _, ok := s.(density.Sampler); needSampler && !ok {
			return nil, nil, cfg, fmt.Errorf("scan: refinement needs samples between grid points, and this source cannot draw them (a model or the exact source of a small system can; the exact source of a lattice too large to enumerate only scores snapshots), or use --refine 1")
		}
	}
	return g, ind, cfg, nil
}

// scanNotes adds the notes on how to read a first pass to res and returns
// the number of bootstrap replicates its errors come from.
func scanNotes(res *Result, sources []density.Source, cfg Config) int {
	B := 0
	if cfg.ExactSums {
		res.Notes = append(res.Notes, "exact sums over all states: the curves carry no sampling error; peak errors are 0 and every local maximum is kept")
		if cfg.Bootstrap > 0 {
			res.Notes = append(res.Notes, "bootstrap ignored: exact sums have no samples to resample")
		}
	} else {
		B = cfg.Bootstrap
		if cfg.Bootstrap == 0 {
			res.Notes = append(res.Notes, "no bootstrap: errors are not estimated and every local maximum is listed as a peak, whether or not it stands above the noise")
		}
	}
	if density.IsGridOnly(sources[0]) {
		res.Notes = append(res.Notes, "histogram source: the frequencies are estimated from the same snapshots they are evaluated on, which biases distances between neighbours upwards when states are poorly sampled; the bootstrap re-estimates the histogram in every replicate")
	}
	if len(sources) > 1 {
		res.Notes = append(res.Notes, fmt.Sprintf("%d sources averaged; errors combine the bootstrap error of the average and the standard deviation across sources in quadrature", len(sources)))
	}
	if cfg.Refine > 1 && !cfg.ExactSums && len(res.Data.Axes) == 1 {
		if cfg.DataAtGridPoints {
			res.Notes = append(res.Notes, fmt.Sprintf("refined grid: expectations at the %d inserted points use %d snapshots drawn from the source, at the data's grid points the data snapshots", res.Layout.K()-res.Data.K(), cfg.ModelSamples))
		} else {
			res.Notes = append(res.Notes, fmt.Sprintf("refined grid: expectations at all %d points use %d snapshots drawn from the source (the data snapshots serve only unrefined scans), so the curves show the source's own distribution and not the data's", res.Layout.K(), cfg.ModelSamples))
		}
	}
	return B
}

// curveBoundaries traces the ridges of the local and fisher maps of a 2-D
// scan.
func curveBoundaries(curves []*Curve, names []string) []Boundary {
	var out []Boundary
	for _, c := range curves {
		if c.Indicator == Local || c.Indicator == Fisher {
			if c.Name == "fisher_deriv" || c.Name == Fisher || c.Axis >= 0 {
				out = append(out, boundaries(c, names)...)
			}
		}
	}
	return out
}

// noisyNotes warns about curves whose peaks could be noise (a peak's
// height error above 15% of its height): a noise spike is reproduced by
// every bootstrap replicate, which resamples the same snapshots, so its
// position error understates the uncertainty.
func noisyNotes(curves []*Curve) []string {
	var out []string
	for _, c := range curves {
		worst := 0.0
		for _, p := range c.Peaks {
			if p.Height != 0 {
				worst = math.Max(worst, p.HeightErr/math.Abs(p.Height))
			}
		}
		if worst > 0.15 {
			msg := fmt.Sprintf("%s is noisy (peak height error up to %.0f%% of the height): a peak may be a fluctuation that the bootstrap reproduces, so its position error is too small; use more samples per point or a coarser grid", c.Name, 100*worst)
			if c.Indicator == Fisher && c.Axis >= 0 {
				msg += " (fisher_deriv is the steadier Fisher estimate when the source has it)"
			}
			out = append(out, msg)
		}
	}
	return out
}

// refineLayout inserts r−1 evenly spaced values between neighbours of every
// axis.
func refineLayout(lo Layout, r int) Layout {
	out := Layout{Names: lo.Names}
	for _, ax := range lo.Axes {
		var na []float64
		for i := 0; i < len(ax)-1; i++ {
			for j := 0; j < r; j++ {
				na = append(na, ax[i]+(ax[i+1]-ax[i])*float64(j)/float64(r))
			}
		}
		na = append(na, ax[len(ax)-1])
		out.Axes = append(out.Axes, na)
	}
	return out
}

// runPass scans layout lo with every source, in stages: evaluate each
// source (its curves and their bootstrap replicates), combine the sources,
// estimate the errors, find the peaks. dataLo is the dataset grid: layout
// points that are data points use the data samples (unless exact sums);
// others use samples drawn from the source. pass separates the sampling
// streams of zoom passes from the first pass.
func runPass(ctx context.Context, sources []density.Source, ds *data.Dataset, g *data.Grid, dataLo, lo Layout, cfg Config, ind map[string]bool, pass int) ([]*Curve, error) {
	S := len(sources)
	B := cfg.Bootstrap
	if cfg.ExactSums {
		B = 0
	}
	evals := make([]*sourceCurves, S)
	for s, src := range sources {
		sc, err := evaluateSource(ctx, src, ds, g, lo, cfg, ind, pass, B, s, S)
		if err != nil {
			return nil, err
		}
		if s > 0 && len(sc.specs) != len(evals[0].specs) {
			return nil, fmt.Errorf("scan: source %d yields %d curves, source 1 %d: combine sources of one kind (all models, say)", s+1, len(sc.specs), len(evals[0].specs))
		}
		evals[s] = sc
	}
	out := make([]*Curve, len(evals[0].specs))
	for c, sp := range evals[0].specs {
		cv := sp.Curve
		combineSources(&cv, evals, c, B)
		noise := curveErrors(&cv, evals, c, B)
		var srcVals [][]float64
		if S > 1 {
			for s := 0; s < S; s++ {
				srcVals = append(srcVals, evals[s].vals[c])
			}
		}
		cv.srcs = srcVals
		findPeaks(&cv, cv.reps, srcVals, B > 0 || cfg.ExactSums, noise)
		if uv, ur := combineUnseen(evals, c, B); uv != nil {
			cv.unseenFar = checkUnseen(&cv, uv, ur)
			cv.unseenChecked = true
		}
		out[c] = &cv
	}
	return out, nil
}

// replicates are one curve's bootstrap replicates: replicates[b][t] is the
// value at position t in replicate b.
type replicates [][]float64

// sourceCurves is one source's evaluation of a layout: the curves' specs,
// their values vals[c][t] and, with a bootstrap, their replicates reps[c].
type sourceCurves struct {
	specs []*curveSpec
	vals  [][]float64
	reps  []replicates
	// unseen and unseenReps are the curves and their replicates on the
	// snapshots the model did not train on (nil: not evaluated; per curve
	// nil for fisher_deriv when it reads model samples).
	unseen     [][]float64
	unseenReps []replicates
}

// evaluateSource is the first stage of a pass: source s of S scores the
// layout, and every curve's value and bootstrap replicates (B of them) are
// computed. A Resampler source is re-estimated from each resample, so the
// whole matrix changes with the replicate.
func evaluateSource(ctx context.Context, src density.Source, ds *data.Dataset, g *data.Grid, lo Layout, cfg Config, ind map[string]bool, pass, B, s, S int) (*sourceCurves, error) {
	ev, evD, err := buildEvalSet(ctx, src, ds, g, lo, cfg, pass, fmt.Sprintf("source %d/%d", s+1, S))
	if err != nil {
		return nil, err
	}
	sp, err := buildCurves(&lo, ev, buildOptions{indicators: ind, window: cfg.Window, slRegions: cfg.SLRegions, deriv: evD})
	if err != nil {
		return nil, fmt.Errorf("scan: %w", err)
	}
	sc := &sourceCurves{specs: sp}
	if cfg.keepLL != nil && onDataGrid(lo, g, pass) && !ev.Exact {
		col := make([]int, g.K())
		for c, p := range ev.Mx.Points {
			col[g.Find(p)] = c
		}
		cfg.keepLL(s, &keptLL{ev.Mx, col})
	}
	rs, refit := src.(density.Resampler)
	var cps []*compiled
	weights := func(c *curveSpec) [][]float64 {
		if c.deriv {
			return evD.W
		}
		return ev.W
	}
	for _, c := range sp {
		sc.vals = append(sc.vals, c.st.direct(weights(c)))
		if B > 0 && (!refit || c.deriv) {
			cps = append(cps, c.st.compile(weights(c)))
		} else {
			cps = append(cps, nil)
		}
	}
	if B == 0 {
		return sc, nil
	}
	var resampled func(w [][]float64) []float64
	if refit {
		resampled = rs.Resampled(ev.xs, ev.Mx.M, ev.Idx)
	}
	var tick func(int)
	if cfg.Progress != nil {
		tick = cfg.Progress(fmt.Sprintf("bootstrap %d/%d", s+1, S), B)
	}
	sc.reps = make([]replicates, len(sp))
	for c := range sp {
		sc.reps[c] = make(replicates, B)
	}
	var wBuf, wDBuf [][]float64 // the replicates' weights, reused
	for b := 0; b < B; b++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		wBuf = bootstrapWeightsInto(wBuf, ev.Idx, cfg.Seed+uint64(pass)<<40, b)
		w := wBuf
		var wD [][]float64
		if evD != nil {
			wDBuf = bootstrapWeightsInto(wDBuf, evD.Idx, cfg.Seed+uint64(pass)<<40+1<<39, b)
			wD = wDBuf
		}
		for c, cp := range cps {
			switch {
			case cp == nil:
			case sp[c].deriv:
				sc.reps[c][b] = cp.eval(wD)
			default:
				sc.reps[c][b] = cp.eval(w)
			}
		}
		if refit {
			mx := &Matrix{M: ev.Mx.M, K: ev.Mx.K, L: resampled(w), Points: ev.Mx.Points}
			evb := &EvalSet{Mx: mx, Idx: ev.Idx, W: w}
			spb, err := buildCurves(&lo, evb, buildOptions{indicators: ind, window: cfg.Window, slRegions: cfg.SLRegions})
			if err != nil {
				return nil, fmt.Errorf("scan: %w", err)
			}
			for c, cb := range spb {
				sc.reps[c][b] = cb.st.direct(w)
			}
		}
		if tick != nil {
			tick(1)
		}
	}
	if cfg.Unseen != nil && !refit && onDataGrid(lo, g, pass) && ev.Mx.M == ds.M {
		evalUnseen(sc, ev, cps, cfg, B, evD == ev)
	}
	return sc, nil
}

// evalUnseen evaluates every curve on the snapshots the model did not train
// on, and B bootstrap replicates of them; fisher_deriv only when derivData
// says it read the data's snapshots too (not model samples).
func evalUnseen(sc *sourceCurves, ev *EvalSet, cps []*compiled, cfg Config, B int, derivData bool) {
	w := unseenWeights(ev, cfg.Unseen, 0, -1)
	if w == nil {
		return
	}
	sc.unseen = make([][]float64, len(sc.specs))
	sc.unseenReps = make([]replicates, len(sc.specs))
	for c, sp := range sc.specs {
		if (!sp.deriv || derivData) && cps[c] != nil {
			sc.unseen[c] = cps[c].eval(w)
			sc.unseenReps[c] = make(replicates, B)
		}
	}
	for b := 0; b < B; b++ {
		wb := unseenWeights(ev, cfg.Unseen, cfg.Seed+1<<38, b)
		for c := range sc.specs {
			if sc.unseen[c] != nil {
				sc.unseenReps[c][b] = cps[c].eval(wb)
			}
		}
	}
}

// combineSources is the second stage: curve c's value is the mean over the
// sources, and so is each of its B bootstrap replicates.
func combineSources(cv *Curve, evals []*sourceCurves, c, B int) {
	S := len(evals)
	T := len(cv.Pos)
	cv.Val = make([]float64, T)
	for s := 0; s < S; s++ {
		for t := 0; t < T; t++ {
			cv.Val[t] += evals[s].vals[c][t] / float64(S)
		}
	}
	if B == 0 {
		return
	}
	cv.reps = make([][]float64, B)
	for b := 0; b < B; b++ {
		r := make([]float64, T)
		for s := 0; s < S; s++ {
			for t := 0; t < T; t++ {
				r[t] += evals[s].reps[c][b][t] / float64(S)
			}
		}
		cv.reps[b] = r
	}
}

// combineUnseen averages curve c on the unseen snapshots over the sources,
// and each of its B replicates, or returns nil when a source lacks it.
func combineUnseen(evals []*sourceCurves, c, B int) ([]float64, [][]float64) {
	S := len(evals)
	for _, e := range evals {
		if e.unseen == nil || e.unseen[c] == nil {
			return nil, nil
		}
	}
	T := len(evals[0].unseen[c])
	val := make([]float64, T)
	reps := make([][]float64, B)
	for b := range reps {
		reps[b] = make([]float64, T)
	}
	for _, e := range evals {
		for t := 0; t < T; t++ {
			val[t] += e.unseen[c][t] / float64(S)
			for b := 0; b < B; b++ {
				reps[b][t] += e.unseenReps[c][b][t] / float64(S)
			}
		}
	}
	return val, reps
}

// curveErrors is the third stage: the error of curve c at each position is
// the bootstrap spread of the combined curve and the spread across sources,
// in quadrature. It returns the bootstrap part alone (the noise the peak
// test compares with).
func curveErrors(cv *Curve, evals []*sourceCurves, c, B int) []float64 {
	S := len(evals)
	T := len(cv.Pos)
	cv.Err = make([]float64, T)
	col := make([]float64, max(B, S))
	noise := make([]float64, T)
	for t := 0; t < T; t++ {
		e2 := 0.0
		if B > 0 {
			for b := 0; b < B; b++ {
				col[b] = cv.reps[b][t]
			}
			e := stdDev(col[:B])
			noise[t] = e
			e2 += e * e
		}
		if S > 1 {
			for s := 0; s < S; s++ {
				col[s] = evals[s].vals[c][t]
			}
			e := stdDev(col[:S])
			e2 += e * e
		}
		cv.Err[t] = math.Sqrt(e2)
	}
	return noise
}

// buildEvalSet computes the matrix and weights of one source on layout lo,
// and the EvalSet of the derivative Fisher information (nil when not
// requested or not available): with exact sums the same states; on the
// data's own grid in the first pass (no refinement) the data's snapshots,
// F(λ) = E_data[(∂_λ log p)²]; elsewhere, for a Sampler, ModelSamples
// snapshots drawn from the source at every point, so that
// F(λ) = E_{p(·|λ)}[(∂_λ log p)²] is the source's own Fisher information;
// otherwise the data. On 32×32 Ising data the data's snapshots put the
// peak within 0.006 of the exact density's and model samples 0.07 below
// it (README, RESULTS): a model's samples carry its own error, the data do
// not.
func buildEvalSet(ctx context.Context, src density.Source, ds *data.Dataset, g *data.Grid, lo Layout, cfg Config, pass int, label string) (*EvalSet, *EvalSet, error) {
	N := ds.N
	K := lo.K()
	pts := lo.Points()
	ev := &EvalSet{}
	var xs []uint8
	var dataRows *data.Dataset // whose snapshots are ev's first rows (nil: none)
	if cfg.ExactSums {
		q := src.Alphabet()
		M := 1
		for i := 0; i < N; i++ {
			M *= q
		}
		if int64(M)*int64(K) > maxExactEntries {
			return nil, nil, fmt.Errorf("scan: exact sums over %d states at %d points need a %d-entry matrix (%d MB), more than the limit of %d entries; use fewer points or sample means (no --exact-sums)", M, K, int64(M)*int64(K), int64(M)*int64(K)*8>>20, maxExactEntries)
		}
		xs = density.AllStates(q, N, M)
		mx, err := computeWithProgress(ctx, src, xs, M, pts, cfg, label)
		if err != nil {
			return nil, nil, err
		}
		ev.Mx = mx
		ev.Idx, ev.W = ExactWeights(mx)
		ev.Exact = true
		ev.xs = xs
	} else {
		// The data's snapshots are read block by block and never copied
		// (data.Dataset.EachBlock: views of States, or blocks read from the
		// file of a dataset read by data.ReadHead); xs holds only the rows
		// drawn here, numbered after the data's.
		_, refit := src.(density.Resampler)
		if refit && ds.InFile() {
			return nil, nil, errors.New("scan: a histogram of the snapshots needs them in memory (data.Read, not data.ReadHead)")
		}
		ev.Idx = make([][]int, K)
		sampler, _ := src.(density.Sampler)
		// On a refined or zoomed layout a sampler supplies every point (see
		// Config.Refine); otherwise the data's snapshots serve their points.
		everywhere := sampler != nil && !density.IsGridOnly(src) && !onDataGrid(lo, g, pass) && !cfg.DataAtGridPoints
		rows := 0
		if !everywhere {
			dataRows, rows = ds, ds.M
		}
		var drawn []int // the points that draw their own snapshots
		for k := 0; k < K; k++ {
			if dk := g.Find(pts[k]); dk >= 0 && !everywhere {
				ev.Idx[k] = g.Index[dk]
				continue
			}
			if sampler == nil {
				return nil, nil, fmt.Errorf("scan: point %s has no data and the source cannot draw samples", data.FormatPoint(lo.Names, pts[k]))
			}
			drawn = append(drawn, k)
		}
		n := cfg.ModelSamples
		// Common random numbers: every point draws from the same stream, so
		// that ancestral samples at neighbouring λ are coupled and the
		// curves are not roughened by independent sampling noise at each
		// point (the paired bootstrap in BootstrapWeights matches this).
		bufs, err := drawAll(ctx, sampler, drawn, pts, n, N, cfg, rand.NewPCG(cfg.Seed, uint64(pass)<<32), lo.Names)
		if err != nil {
			return nil, nil, err
		}
		for i, k := range drawn {
			xs = append(xs, bufs[i]...)
			for j := 0; j < n; j++ {
				ev.Idx[k] = append(ev.Idx[k], rows+j)
			}
			rows += n
		}
		if ev.Mx, err = rowsMatrix(ctx, src, dataRows, xs, pts, cfg, label); err != nil {
			return nil, nil, err
		}
		ev.W = SampleWeights(ev.Idx)
		if refit {
			ev.xs = ds.States // a histogram serves grid points only: no drawn rows
		}
	}
	if !contains(cfg.Indicators, Fisher) || density.IsGridOnly(src) {
		return ev, nil, nil
	}
	evD, dxs := ev, xs
	if sampler, ok := src.(density.Sampler); ok && !cfg.ExactSums && !derivOnData(lo, g, pass, cfg) {
		n := cfg.ModelSamples
		all := make([]int, K)
		for k := range all {
			all[k] = k
		}
		bufs, err := drawAll(ctx, sampler, all, pts, n, N, cfg, rand.NewPCG(cfg.Seed, uint64(pass)<<32|1<<31), lo.Names) // common random numbers, as above
		if err != nil {
			return nil, nil, err
		}
		dxs = make([]uint8, 0, K*n*N)
		evD = &EvalSet{Idx: make([][]int, K)}
		for k := 0; k < K; k++ {
			dxs = append(dxs, bufs[k]...)
			for i := 0; i < n; i++ {
				evD.Idx[k] = append(evD.Idx[k], k*n+i)
			}
		}
		evD.W = SampleWeights(evD.Idx)
	}
	var grad [][]float64
	var err error
	if evD == ev && !ev.Exact {
		grad, err = streamGradients(ctx, src, dataRows, xs, evD, lo, g.Axes, cfg)
	} else {
		grad, err = gradients(ctx, src, dxs, evD, lo, g.Axes, cfg)
	}
	if err != nil {
		return nil, nil, err
	}
	evD.Grad = grad
	return ev, evD, nil
}

// contiguous reports that idx is a run of consecutive rows.
func contiguous(idx []int) bool {
	for i, m := range idx {
		if m != idx[0]+i {
			return false
		}
	}
	return len(idx) > 0
}

// onDataGrid reports that a pass scans the data's own grid points: the
// first pass, on a layout of the data grid's size (no refinement inserted
// there), where the data's snapshots serve every point.
func onDataGrid(lo Layout, g *data.Grid, pass int) bool {
	return pass == 0 && lo.K() == g.K()
}

// derivOnData reports that fisher_deriv reads the data's snapshots: on the
// data's grid, and only when no later pass refines it (a 2-D --refine adds
// points after the first pass; its fisher_deriv reads model samples in
// every pass, so that its curve is one estimator throughout).
func derivOnData(lo Layout, g *data.Grid, pass int, cfg Config) bool {
	return onDataGrid(lo, g, pass) && cfg.Refine <= 1
}

func contains(s []string, x string) bool {
	for _, v := range s {
		if v == x {
			return true
		}
	}
	return false
}

func computeWithProgress(ctx context.Context, src density.Source, xs []uint8, n int, pts [][]float64, cfg Config, label string) (*Matrix, error) {
	opt := MatrixOptions{Threads: cfg.Threads}
	if cfg.Progress != nil {
		opt.Progress = cfg.Progress("log-likelihoods, "+label, n*len(pts))
	}
	mx, err := computeMatrix(ctx, src, xs, n, pts, opt)
	if err != nil {
		return nil, fmt.Errorf("scan: %w", err)
	}
	return mx, nil
}

// rowsMatrix is computeWithProgress of the evaluation rows of a pass: the
// snapshots of ds, when it is not nil, read block by block
// (data.Dataset.EachBlock), then the rows extra drawn from the source.
func rowsMatrix(ctx context.Context, src density.Source, ds *data.Dataset, extra []uint8, pts [][]float64, cfg Config, label string) (*Matrix, error) {
	N, K := src.Sites(), len(pts)
	m, n := 0, len(extra)/N
	if ds != nil {
		m = ds.M
	}
	opt := MatrixOptions{Threads: cfg.Threads}
	if cfg.Progress != nil {
		opt.Progress = cfg.Progress("log-likelihoods, "+label, (m+n)*K)
	}
	mx := &Matrix{M: m + n, K: K, L: make([]float64, (m+n)*K), Points: pts}
	fill := func(first int, xs []uint8) error {
		c := len(xs) / N
		if err := checkMatrixArgs(src, xs, c, pts); err != nil {
			return err
		}
		return fillMatrix(ctx, src, xs, c, pts, opt, mx.L[first*K:(first+c)*K])
	}
	var err error
	if ds != nil {
		err = ds.EachBlock(ctx, 0, fill)
	}
	if err == nil && n > 0 {
		err = fill(m, extra)
	}
	if err == nil {
		err = checkNaN(mx)
	}
	if err != nil {
		return nil, fmt.Errorf("scan: %w", err)
	}
	return mx, nil
}

// gradients computes ∂_a log p(x|λ_k) for the slots of every point by a
// central difference with step h_a = Δ_a/100 (Δ_a the smallest spacing of
// axis a; error O(h²)). An axis with a single value in lo (a zoom window
// along the other axis) takes its spacing from the data grid's axes.
func gradients(ctx context.Context, src density.Source, xs []uint8, ev *EvalSet, lo Layout, dataAxes [][]float64, cfg Config) ([][]float64, error) {
	N := src.Sites()
	K := lo.K()
	h := gradientSteps(lo, dataAxes)
	grad := make([][]float64, K)
	var tick func(int)
	if cfg.Progress != nil {
		tick = cfg.Progress("derivatives in λ", K)
	}
	err := data.ForEachPoint(ctx, K, cfg.Threads, func(k int) error {
		g, err := pointGradient(src, xs, ev, k, lo.Point(k), h, N)
		if err != nil {
			return fmt.Errorf("scan: derivative at %s: %w", data.FormatPoint(lo.Names, lo.Point(k)), err)
		}
		grad[k] = g
		if tick != nil {
			tick(1)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return grad, nil
}

// gradientSteps returns the central-difference step of each axis (see
// gradients).
func gradientSteps(lo Layout, dataAxes [][]float64) []float64 {
	h := make([]float64, lo.Dim())
	for a, ax := range lo.Axes {
		if len(ax) < 2 && a < len(dataAxes) {
			ax = dataAxes[a]
		}
		dm := math.Inf(1)
		for i := 1; i < len(ax); i++ {
			dm = math.Min(dm, ax[i]-ax[i-1])
		}
		h[a] = dm / 100
	}
	return h
}

// gradChunk is the most snapshots streamGradients differentiates in one
// call.
const gradChunk = 512

// streamGradients is gradients for an evaluation set whose first rows are
// the snapshots of ds (none when ds is nil), read block by block
// (data.Dataset.EachBlock), and whose other rows are extra (rows drawn from
// the source). Every row gets the value gradients gives it: the derivative
// at its own point depends on its own snapshot only.
func streamGradients(ctx context.Context, src density.Source, ds *data.Dataset, extra []uint8, ev *EvalSet, lo Layout, dataAxes [][]float64, cfg Config) ([][]float64, error) {
	N, K, d := src.Sites(), lo.K(), lo.Dim()
	h := gradientSteps(lo, dataAxes)
	m := 0
	if ds != nil {
		m = ds.M
	}
	slots := data.NewSlots(m+len(extra)/N, ev.Idx)
	grad := make([][]float64, K)
	for k, idx := range ev.Idx {
		grad[k] = make([]float64, len(idx)*d)
	}
	var tick func(int)
	if cfg.Progress != nil {
		tick = cfg.Progress("derivatives in λ", m+len(extra)/N)
	}
	type chunk struct{ lo, n, k, i int } // rows lo.. of the block: point k's slots i..
	block := func(first int, xs []uint8) error {
		var chunks []chunk
		slots.Runs(first, len(xs)/N, gradChunk, func(lo, c, k, i int) error {
			chunks = append(chunks, chunk{lo, c, k, i})
			return nil
		})
		err := data.ForEachPoint(ctx, len(chunks), cfg.Threads, func(j int) error {
			c := chunks[j]
			g, err := gradientOf(src, xs[c.lo*N:(c.lo+c.n)*N], c.n, lo.Point(c.k), h)
			if err != nil {
				return fmt.Errorf("scan: derivative at %s: %w", data.FormatPoint(lo.Names, lo.Point(c.k)), err)
			}
			copy(grad[c.k][c.i*d:(c.i+c.n)*d], g)
			return nil
		})
		if err == nil && tick != nil {
			tick(len(xs) / N)
		}
		return err
	}
	if ds != nil {
		if err := ds.EachBlock(ctx, 0, block); err != nil {
			return nil, err
		}
	}
	if len(extra) > 0 {
		if err := block(m, extra); err != nil {
			return nil, err
		}
	}
	return grad, nil
}

// pointGradient is ∂_a log p(x|λ) at p for the slots of point k of ev, by
// central differences with steps h (see gradients). A MatrixSource scores
// the snapshots at all 2d shifted points in one call, sharing the
// λ-independent work. A state impossible at λ±h carries no weight at λ: its
// derivative is 0.
func pointGradient(src density.Source, xs []uint8, ev *EvalSet, k int, p, h []float64, N int) ([]float64, error) {
	// The sets gradients serves (all states, or the model's own samples)
	// hold each point's slots in one run of rows: read them in place.
	idx := ev.Idx[k]
	if !contiguous(idx) {
		return nil, errors.New("the slots of a point are not one run of rows")
	}
	n := len(idx)
	return gradientOf(src, xs[idx[0]*N:(idx[0]+n)*N], n, p, h)
}

// gradientOf is ∂_a log p(x|λ) at p for the n snapshots sub, by central
// differences with steps h, at g[i·d+a].
func gradientOf(src density.Source, sub []uint8, n int, p, h []float64) ([]float64, error) {
	d := len(p)
	g := make([]float64, n*d)
	finite := func(v float64) float64 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0
		}
		return v
	}
	if ms, ok := src.(density.MatrixSource); ok {
		var ls [][]float64
		for a := 0; a < d; a++ {
			pu := append([]float64(nil), p...)
			pd := append([]float64(nil), p...)
			pu[a] += h[a]
			pd[a] -= h[a]
			ls = append(ls, pu, pd)
		}
		out, err := ms.LogProbMatrix(sub, n, ls, 1)
		if err == nil && len(out) != n*2*d {
			err = fmt.Errorf("source returned %d values, expected %d", len(out), n*2*d)
		}
		if err != nil {
			return nil, err
		}
		for i := 0; i < n; i++ {
			for a := 0; a < d; a++ {
				g[i*d+a] = finite((out[i*2*d+2*a] - out[i*2*d+2*a+1]) / (2 * h[a]))
			}
		}
		return g, nil
	}
	up := make([]float64, n)
	dn := make([]float64, n)
	for a := 0; a < d; a++ {
		pu := append([]float64(nil), p...)
		pd := append([]float64(nil), p...)
		pu[a] += h[a]
		pd[a] -= h[a]
		err := src.LogProb(up, sub, pu)
		if err == nil {
			err = src.LogProb(dn, sub, pd)
		}
		if err != nil {
			return nil, err
		}
		for i := 0; i < n; i++ {
			g[i*d+a] = finite((up[i] - dn[i]) / (2 * h[a]))
		}
	}
	return g, nil
}

// zoomPass runs the finer second pass around every first-pass peak. On a
// 1-D grid the window is 2R+1 points over ±1 step of the scanned grid
// around the peak. On a 2-D grid a peak lies on a line along one axis at a
// fixed value of the other, and its window runs along that line only (the
// other axis holds the one fixed value): it refines where the line crosses
// the boundary, at a cost linear in R rather than quadratic. Only lines
// through the data's grid values are zoomed.
func zoomPass(ctx context.Context, res *Result, sources []density.Source, ds *data.Dataset, g *data.Grid, cfg Config, ind map[string]bool) error {
	for _, s := range sources {
		if _, ok := s.(density.Sampler); (!ok && !cfg.ExactSums) || density.IsGridOnly(s) {
			res.Notes = append(res.Notes, "zoom skipped: it needs a source that can draw samples between grid points (a model or an exact source)")
			return nil
		}
	}
	// A centre is a peak position with the axis its line runs along.
	type centre struct {
		axis int
		at   []float64
	}
	// On a 2-D grid only the lines through the data's grid values are
	// zoomed (a refined grid's inserted lines would multiply the windows).
	onDataLine := func(axis int, at []float64) bool {
		for a, v := range at {
			if a == axis {
				continue
			}
			found := false
			for _, u := range g.Axes[a] {
				found = found || data.SameValue(u, v)
			}
			if !found {
				return false
			}
		}
		return true
	}
	var cs []centre
	for _, c := range res.Curves {
		for _, p := range c.Peaks {
			if ax := c.Lines[p.Line].Axis; onDataLine(ax, p.At) {
				cs = append(cs, centre{axis: ax, at: p.At})
			}
		}
	}
	// Sort by axis, then by the fixed coordinates, then along the axis, so
	// that peaks of several curves on one line become one window.
	key := func(c centre) []float64 {
		k := []float64{float64(c.axis)}
		for a, v := range c.at {
			if a != c.axis {
				k = append(k, v)
			}
		}
		return append(k, c.at[c.axis])
	}
	sort.SliceStable(cs, func(i, j int) bool {
		ki, kj := key(cs[i]), key(cs[j])
		for n := range ki {
			if ki[n] != kj[n] {
				return ki[n] < kj[n]
			}
		}
		return false
	})
	step := func(axis int, x float64) float64 {
		ax := res.Layout.Axes[axis]
		i := sort.SearchFloat64s(ax, x)
		i = max(1, min(len(ax)-1, i))
		return ax[i] - ax[i-1]
	}
	sameLine := func(a, b centre) bool {
		if a.axis != b.axis {
			return false
		}
		for n := range a.at {
			if n != a.axis && a.at[n] != b.at[n] {
				return false
			}
		}
		return true
	}
	var centres []centre
	for _, c := range cs {
		if n := len(centres); n > 0 && sameLine(centres[n-1], c) && c.at[c.axis]-centres[n-1].at[c.axis] < 0.5*step(c.axis, c.at[c.axis]) {
			continue
		}
		centres = append(centres, c)
	}
	R := max(cfg.Refine, 2)
	zc := cfg
	zc.Refine = 1
	// sl's classifier is trained on the end regions of the whole grid, which
	// a zoom window does not contain: it is not re-scanned.
	zc.SLRegions = nil
	zind := map[string]bool{}
	for k, v := range ind {
		zind[k] = v && k != SL
	}
	if ind[SL] {
		res.Notes = append(res.Notes, "zoom: sl is not re-scanned (its classifier is trained on the end regions of the whole grid)")
	}
	if g.Dim() > 1 && len(centres) > 0 {
		res.Notes = append(res.Notes, "zoom on a 2-D grid: each window runs along the line of its peak, at the fixed value of the other parameter")
	}
	for z, c := range centres {
		x := c.at[c.axis]
		dx := step(c.axis, x)
		lo := Layout{Names: res.Names, Axes: make([][]float64, len(c.at))}
		for a, v := range c.at {
			if a != c.axis {
				lo.Axes[a] = []float64{v}
				continue
			}
			for j := -R; j <= R; j++ {
				lo.Axes[a] = append(lo.Axes[a], x+dx*float64(j)/float64(R))
			}
		}
		curves, err := runPass(ctx, sources, ds, g, res.Data, lo, zc, zind, z+1)
		if err != nil {
			return fmt.Errorf("zoom around %s: %w", data.FormatPoint(res.Names, c.at), err)
		}
		res.Zoom = append(res.Zoom, ZoomResult{Around: append([]float64(nil), c.at...), Axis: c.axis, Layout: lo, Curves: curves})
	}
	return nil
}

// drawAll draws n snapshots at each of the points pts[k], k in ks, on up to
// cfg.Threads goroutines (data.ForEachPoint). Every point starts from a copy of the same
// generator state (common random numbers), so the result does not depend on
// the number of threads.
func drawAll(ctx context.Context, sampler density.Sampler, ks []int, pts [][]float64, n, N int, cfg Config, seed *rand.PCG, names []string) ([][]uint8, error) {
	state, err := seed.MarshalBinary()
	if err != nil {
		return nil, err
	}
	bufs := make([][]uint8, len(ks))
	err = data.ForEachPoint(ctx, len(ks), cfg.Threads, func(i int) error {
		src := new(rand.PCG)
		if err := src.UnmarshalBinary(state); err != nil {
			return err
		}
		bufs[i] = make([]uint8, n*N)
		if err := sampler.Sample(bufs[i], n, pts[ks[i]], rand.New(src)); err != nil {
			return fmt.Errorf("scan: drawing samples at %s: %w", data.FormatPoint(names, pts[ks[i]]), err)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return bufs, nil
}
