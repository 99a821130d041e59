package scorestat

import (
	"context"
	"fmt"

	"tidemark/data"
	"tidemark/data/density"
)

// scoreChunk is the largest number of snapshots scored in one job, so that
// the copies of the jobs in flight stay small beside the dataset itself
// (10^6 snapshots of 1024 sites at one point would otherwise be copied
// whole). It is large enough that the model's per-call preparation (its
// float32 weights) costs little: at 1024 it was 5% of the CPU time of
// scoring 1024-site snapshots at one λ.
const scoreChunk = 4096

// job is one batch of snapshots scored at one λ.
type job struct {
	rows   []int
	lambda []float64
}

// Score returns log p(x_m|λ_m) in nats of every snapshot of ds and the λ
// used (row-major M × d): each snapshot at its own λ, or all at at when at
// is not nil. The jobs (one per grid point, or per block of snapshots) run
// on up to threads goroutines, in blocks of at most scoreChunk snapshots (data.ForEachPoint); the result does not
// depend on threads. progress, if set, receives the number of snapshots
// scored.
func Score(src density.Source, ds *data.Dataset, at []float64, threads int, progress func(int)) (logp, params []float64, err error) {
	d := src.ParamDim()
	logp = make([]float64, ds.M)
	params = make([]float64, ds.M*d)
	var jobs []job
	// chunks adds the jobs of the rows idx at lambda, scoreChunk at a time.
	chunks := func(idx []int, lambda []float64) {
		for lo := 0; lo < len(idx); lo += scoreChunk {
			jobs = append(jobs, job{idx[lo:min(lo+scoreChunk, len(idx))], lambda})
		}
	}
	if at != nil {
		all := make([]int, ds.M)
		for i := range all {
			all[i] = i
		}
		chunks(all, at)
	} else {
		g := data.NewGrid(ds)
		for k, idx := range g.Index {
			chunks(idx, g.Points[k])
		}
	}
	err = data.ForEachPoint(context.Background(), len(jobs), threads, func(j int) error {
		jb := jobs[j]
		xs := make([]uint8, 0, len(jb.rows)*ds.N)
		for _, r := range jb.rows {
			xs = append(xs, ds.Row(r)...)
		}
		lp := make([]float64, len(jb.rows))
		if err := src.LogProb(lp, xs, jb.lambda); err != nil {
			return fmt.Errorf("at %v: %w", jb.lambda, err)
		}
		for i, r := range jb.rows {
			logp[r] = lp[i]
			copy(params[r*d:(r+1)*d], jb.lambda)
		}
		if progress != nil {
			progress(len(jb.rows))
		}
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	return logp, params, nil
}
