package indicator

import (
	"context"
	"fmt"
	"sort"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/phases"
)

// refineLine is one grid line of a 2-D refinement: the positions inserted
// on it, all in grid intervals that a boundary crosses.
type refineLine struct {
	axis  int     // the axis the line runs along
	fixed float64 // the other axis's value
	xs    []float64
}

// refineRidges is a 2-D scan's refinement near its boundaries (Config.Refine
// R > 1): on every grid edge whose two points the primary phase map puts in
// different phases, R−1 evenly spaced points are inserted, the Fisher
// metric is computed there from ModelSamples snapshots drawn from the
// sources (as it is at the grid points), and the boundaries of that map
// are located again with the inserted points joining the fit of the
// profile across each boundary (phases.BoundariesWith). The cost grows
// with the number of edges a boundary crosses — its length in grid
// spacings — not with the area of the grid. Only a map of the metric from
// ∂λ log p (fisher_deriv) is refined: it is defined point by point, where
// the other indicators compare neighbours.
func refineRidges(ctx context.Context, res *Result, sources []density.Source, ds *data.Dataset, g *data.Grid, cfg Config) error {
	pd := res.Phases
	if pd == nil || cfg.Refine < 2 {
		return nil
	}
	mi := -1
	for i, m := range pd.Maps {
		if m.perPoint {
			mi = i
		}
	}
	if mi < 0 {
		res.Notes = append(res.Notes, "2-D refinement skipped: it refines the Fisher metric from ∂λ log p (fisher_deriv), which this scan does not have")
		return nil
	}
	pm := &pd.Maps[mi]
	lines := refineLines(res.Data, pm.Phases.Labels, cfg.Refine)
	if len(lines) == 0 {
		return nil
	}
	zc := cfg
	zc.Refine, zc.Zoom, zc.SLRegions = 1, false, nil
	zc.Indicators = []string{Fisher}
	ind := map[string]bool{Fisher: true}
	names := res.Names
	ex := phases.Samples{Step: 1 / float64(cfg.Refine)}
	nrep, nsrc := len(pm.reps), len(pm.members)
	if nrep > 0 {
		ex.Reps = make([][]float64, nrep)
	}
	if nsrc > 0 {
		ex.Members = make([][]float64, nsrc)
	}
	for n, ln := range lines {
		lo := Layout{Names: names, Axes: make([][]float64, 2)}
		lo.Axes[ln.axis] = ln.xs
		lo.Axes[1-ln.axis] = []float64{ln.fixed}
		curves, err := runPass(ctx, sources, ds, g, res.Data, lo, zc, ind, 1<<16+n)
		if err != nil {
			return fmt.Errorf("scan: refining near the boundaries, line %s = %g: %w", names[1-ln.axis], ln.fixed, err)
		}
		by := map[string]*Curve{}
		for _, c := range curves {
			by[c.Name] = c
		}
		c00 := by[fmt.Sprintf("fisher_deriv_%s_%s", names[0], names[0])]
		c01 := by[fmt.Sprintf("fisher_deriv_%s_%s", names[0], names[1])]
		c11 := by[fmt.Sprintf("fisher_deriv_%s_%s", names[1], names[1])]
		if c00 == nil || c01 == nil || c11 == nil {
			return fmt.Errorf("scan: refining near the boundaries: the sources gave no Fisher metric on the line %s = %g", names[1-ln.axis], ln.fixed)
		}
		val, err := phases.MetricStrength(c00.Val, c01.Val, c11.Val, pd.Scale)
		if err != nil {
			return err
		}
		for _, p := range c00.Pos {
			ex.Points = append(ex.Points, [2]float64{p[0], p[1]})
		}
		ex.Val = append(ex.Val, val...)
		for b := 0; b < nrep; b++ {
			m, err := phases.MetricStrength(c00.reps[b], c01.reps[b], c11.reps[b], pd.Scale)
			if err != nil {
				return err
			}
			ex.Reps[b] = append(ex.Reps[b], m...)
		}
		for s := 0; s < nsrc; s++ {
			m, err := phases.MetricStrength(c00.srcs[s], c01.srcs[s], c11.srcs[s], pd.Scale)
			if err != nil {
				return err
			}
			ex.Members[s] = append(ex.Members[s], m...)
		}
	}
	gr := phases.Grid{X0: res.Data.Axes[0], X1: res.Data.Axes[1]}
	bds, err := phases.BoundariesWith(gr, pm.Strength, pm.reps, pm.members, pm.Phases, ex)
	if err != nil {
		return fmt.Errorf("scan: boundaries of %s after refinement: %w", pm.Indicator, err)
	}
	pm.Boundaries = bds
	pm.Refined, pm.RefinedStrength = ex.Points, ex.Val
	res.Notes = append(res.Notes, fmt.Sprintf("2-D refinement: the %s map's metric was computed at %d points inserted on the %d grid edges its boundaries cross (%d snapshots drawn per point), and its boundaries located again with them", pm.Indicator, len(ex.Points), len(ex.Points)/(cfg.Refine-1), cfg.ModelSamples))
	return nil
}

// refineLines returns the lines of a refinement by r of the grid lo: on
// every edge whose two points have different labels, r−1 evenly spaced
// positions, grouped by grid line in ascending order.
func refineLines(lo Layout, labels []int, r int) []refineLine {
	ax0, ax1 := lo.Axes[0], lo.Axes[1]
	n1 := len(ax1)
	var out []refineLine
	for axis := 0; axis < 2; axis++ {
		along, across := ax0, ax1
		if axis == 1 {
			along, across = ax1, ax0
		}
		for l := range across {
			var xs []float64
			for i := 0; i+1 < len(along); i++ {
				a, b := i*n1+l, (i+1)*n1+l
				if axis == 1 {
					a, b = l*n1+i, l*n1+i+1
				}
				if labels[a] == labels[b] {
					continue
				}
				for j := 1; j < r; j++ {
					xs = append(xs, along[i]+(along[i+1]-along[i])*float64(j)/float64(r))
				}
			}
			if len(xs) > 0 {
				sort.Float64s(xs)
				out = append(out, refineLine{axis: axis, fixed: across[l], xs: xs})
			}
		}
	}
	return out
}
