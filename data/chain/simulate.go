package chain

import (
	"context"
	"fmt"
	"math/rand/v2"

	"tidemark/data"
)

// Result holds the snapshots drawn over a grid.
type Result struct {
	// States holds len(Points)·samples snapshots, point by point, row-major.
	States []uint8
	// Params holds the parameters of each snapshot, row-major.
	Params []float64
	// Points records the ground state at each grid point, in grid order.
	Points []PointMeta
}

// Simulate draws samples snapshots at every grid point from s, running up to
// threads points at once. Point k draws from the stream
// rand.NewPCG(seed, k), so the result does not depend on threads. progress,
// if not nil, is called with the number of snapshots finished (safe to call
// from several goroutines). It stops early with ctx's error.
func Simulate(ctx context.Context, s *Source, points [][]float64, samples int, seed uint64, threads int, progress func(n int)) (*Result, error) {
	if samples < 1 {
		return nil, fmt.Errorf("chain: samples: expected at least 1, found %d", samples)
	}
	n, d := s.Sites(), s.ParamDim()
	res := &Result{
		States: make([]uint8, len(points)*samples*n),
		Params: make([]float64, len(points)*samples*d),
		Points: make([]PointMeta, len(points)),
	}
	for k, p := range points {
		if err := s.cfg.checkLambda(p); err != nil {
			return nil, fmt.Errorf("grid point %d: %w", k, err)
		}
		for m := 0; m < samples; m++ {
			copy(res.Params[(k*samples+m)*d:], p)
		}
	}
	err := data.ForEachPoint(ctx, len(points), threads, func(k int) error {
		st, err := s.GroundState(points[k])
		if err != nil {
			return err
		}
		res.Points[k] = PointMeta{Params: append([]float64(nil), points[k]...), E0: st.E0, Gap: st.Gap}
		rng := rand.New(rand.NewPCG(seed, uint64(k)))
		if err := s.Sample(res.States[k*samples*n:(k+1)*samples*n], samples, points[k], rng); err != nil {
			return err
		}
		if progress != nil {
			progress(samples)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return res, nil
}
