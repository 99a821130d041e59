package scorestat

import (
	"fmt"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/posterior"
)

// posteriorBlock is the number of snapshots scored over the grid at once.
const posteriorBlock = 1024

// Group is one group of snapshots for the posterior: the snapshots that
// share a label, or the whole file when it is unlabelled.
type Group struct {
	Label []float64 // nil for the whole unlabelled file
	Rows  []int
	// LogPost is the normalised log posterior over the grid.
	LogPost []float64
	Axes    []posterior.Summary
}

// Posteriors holds the posteriors of every snapshot and group.
type Posteriors struct {
	Grid    [][]float64 // K points
	LogPost []float64   // M × K, normalised per snapshot
	Axes    [][]posterior.Summary
	Groups  []Group
}

// Posterior scores every snapshot of ds at every point of grid and returns
// the posteriors (uniform prior over the grid) of each snapshot and of each
// group of snapshots sharing a label (the whole file when ds has no labels),
// each summarised per axis with a central Credible interval. progress, if
// set, receives the number of snapshots scored.
func Posterior(src density.MatrixSource, ds *data.Dataset, grid [][]float64, threads int, progress func(int)) (*Posteriors, error) {
	K := len(grid)
	ll := make([]float64, 0, ds.M*K)
	for lo := 0; lo < ds.M; lo += posteriorBlock {
		n := min(posteriorBlock, ds.M-lo)
		part, err := src.LogProbMatrix(ds.States[lo*ds.N:(lo+n)*ds.N], n, grid, threads)
		if err != nil {
			return nil, err
		}
		ll = append(ll, part...)
		if progress != nil {
			progress(n)
		}
	}
	res := &Posteriors{Grid: grid, LogPost: make([]float64, ds.M*K), Axes: make([][]posterior.Summary, ds.M)}
	for r := 0; r < ds.M; r++ {
		lp, err := posterior.Normalize(ll[r*K : (r+1)*K])
		if err != nil {
			return nil, fmt.Errorf("snapshot %d: %w", r, err)
		}
		copy(res.LogPost[r*K:], lp)
		if res.Axes[r], err = posterior.Axes(grid, posterior.Probs(lp), Credible); err != nil {
			return nil, fmt.Errorf("snapshot %d: %w", r, err)
		}
	}
	if ds.D == 0 {
		rows := make([]int, ds.M)
		for i := range rows {
			rows[i] = i
		}
		res.Groups = []Group{{Rows: rows}}
	} else {
		g := data.NewGrid(ds)
		for k, idx := range g.Index {
			res.Groups = append(res.Groups, Group{Label: g.Points[k], Rows: idx})
		}
	}
	for i := range res.Groups {
		gr := &res.Groups[i]
		lp, err := posterior.Normalize(posterior.GroupLogLik(ll, K, gr.Rows))
		if err != nil {
			return nil, fmt.Errorf("group %d: %w", i, err)
		}
		gr.LogPost = lp
		if gr.Axes, err = posterior.Axes(grid, posterior.Probs(lp), Credible); err != nil {
			return nil, fmt.Errorf("group %d: %w", i, err)
		}
	}
	return res, nil
}
