package ising

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"tidemark/data"
)

// Burn-in settings of Simulate.
const (
	// ThermSweeps are the sweeps run before the autocorrelation series.
	ThermSweeps = 100
	// MinSeriesSweeps is the first length of the series from which τ is
	// estimated; it doubles until it is TauRuns times the larger τ.
	MinSeriesSweeps = 500
	// TauRuns is how many autocorrelation times the series must span.
	TauRuns = 100
	// MaxSeriesUpdates caps the spin updates spent on one point's series.
	MaxSeriesUpdates = 1 << 29
)

// Config says what Simulate makes.
type Config struct {
	// Lattice is the periodic lattice.
	Lattice Lattice
	// Fixed holds the couplings that are not grid axes.
	Fixed Couplings
	// Axes names the grid axes (each "T", "Jx", "Jy" or "h").
	Axes []string
	// Points are the grid points, one value per axis.
	Points [][]float64
	// Samples is the number of snapshots per point.
	Samples int
	// Enumerated draws exact independent samples by enumeration (N ≤ 24)
	// instead of Monte Carlo.
	Enumerated bool
	// Seed seeds every point's stream PCG(Seed, FirstPoint + point index).
	Seed uint64
	// FirstPoint is the index in a larger grid of Points[0], so that one
	// point of that grid can be drawn alone with the stream it has there.
	FirstPoint uint64
	// Threads is the number of points run at once (≤ 0: every CPU, data.Threads).
	Threads int
	// Progress, when set, is called with the number of snapshots just
	// made; it may be called from several goroutines at once.
	Progress func(n int)
}

// Result is what Simulate made: Samples snapshots per point, point by
// point in the order of Config.Points.
type Result struct {
	// States holds the snapshots row-major (len = points·Samples·N).
	States []uint8
	// Params holds each snapshot's grid point (len = points·Samples·axes).
	Params []float64
	// Points records how each point was sampled.
	Points []PointInfo
}

// Simulate draws cfg.Samples snapshots at every grid point, each point on
// its own chain seeded from (Seed, point index) so that the result does not
// depend on Threads. It stops early with ctx's error when ctx is done.
func Simulate(ctx context.Context, cfg Config) (*Result, error) {
	if err := cfg.Lattice.Validate(); err != nil {
		return nil, err
	}
	if err := checkNames(cfg.Axes); err != nil {
		return nil, err
	}
	if cfg.Samples < 1 {
		return nil, fmt.Errorf("samples per point: expected at least 1, found %d", cfg.Samples)
	}
	coup := make([]Couplings, len(cfg.Points))
	for k, p := range cfg.Points {
		c, err := withParams(cfg.Fixed, cfg.Axes, p)
		if err != nil {
			return nil, fmt.Errorf("grid point %d: %w", k+1, err)
		}
		coup[k] = c
	}
	var exact *Enumeration
	if cfg.Enumerated {
		var err error
		if exact, err = NewEnumeration(cfg.Lattice); err != nil {
			return nil, err
		}
	}
	n, d, per := cfg.Lattice.N(), len(cfg.Axes), cfg.Samples
	res := &Result{
		States: make([]uint8, len(cfg.Points)*per*n),
		Params: make([]float64, len(cfg.Points)*per*d),
		Points: make([]PointInfo, len(cfg.Points)),
	}
	err := data.ForEachPoint(ctx, len(cfg.Points), cfg.Threads, func(k int) error {
		dst := res.States[k*per*n : (k+1)*per*n]
		info, err := samplePoint(ctx, cfg, exact, coup[k], cfg.FirstPoint+uint64(k), dst)
		info.Params = append([]float64(nil), cfg.Points[k]...)
		res.Points[k] = info
		for j := 0; j < per; j++ {
			copy(res.Params[(k*per+j)*d:], cfg.Points[k])
		}
		return err
	})
	if err != nil {
		return nil, err
	}
	return res, nil
}

func samplePoint(ctx context.Context, cfg Config, exact *Enumeration, c Couplings, k uint64, dst []uint8) (PointInfo, error) {
	n := cfg.Lattice.N()
	if exact != nil {
		rng := rand.New(rand.NewPCG(cfg.Seed, k))
		const chunk = 256
		for j := 0; j < cfg.Samples; j += chunk {
			if err := ctx.Err(); err != nil {
				return PointInfo{}, err
			}
			m := min(chunk, cfg.Samples-j)
			exact.Sample(dst[j*n:(j+m)*n], m, c, rng)
			if cfg.Progress != nil {
				cfg.Progress(m)
			}
		}
		return PointInfo{Method: "exact", TauConverged: true}, nil
	}
	ch, err := NewMarkovChain(cfg.Lattice, c, cfg.Seed, k)
	if err != nil {
		return PointInfo{}, err
	}
	info, err := ch.BurnIn(ctx)
	if err != nil {
		return info, err
	}
	for j := 0; j < cfg.Samples; j++ {
		if j%64 == 0 {
			if err := ctx.Err(); err != nil {
				return info, err
			}
		}
		for i := 0; i < info.SpacingSweeps; i++ {
			ch.Sweep()
		}
		copy(dst[j*n:(j+1)*n], ch.s)
		if cfg.Progress != nil {
			cfg.Progress(1)
		}
	}
	return info, nil
}

// BurnIn thermalises the chain and measures the integrated autocorrelation
// times of the energy and of |m| (Sokal's windowing; with h ≠ 0 also of
// the signed m, the slow mode when the field is weak, folded into TauAbsM): ThermSweeps sweeps,
// then a measured series of at least MinSeriesSweeps sweeps, doubled until it
// spans TauRuns times the larger τ (or MaxSeriesUpdates spin updates are
// spent; TauConverged is then false). The series counts as burn-in. The
// spacing it returns is ⌈2τ⌉ sweeps of the larger τ.
func (ch *MarkovChain) BurnIn(ctx context.Context) (PointInfo, error) {
	info := PointInfo{Method: "metropolis"}
	if ch.wolff {
		info.Method = "wolff"
	}
	n := len(ch.s)
	if ch.wolff && ch.clusters == 0 {
		// Thermalise growing clusters until N spins flipped per sweep, and
		// measure the mean cluster size over the second half to fix the
		// number of clusters per sweep for everything that is kept.
		var spins, clusters int
		for i := 0; i < ThermSweeps; i++ {
			flipped := 0
			for flipped < n {
				c := ch.WolffCluster()
				flipped += c
				if i >= ThermSweeps/2 {
					spins += c
					clusters++
				}
			}
		}
		ch.SetClustersPerSweep(int(math.Round(float64(n) * float64(clusters) / float64(spins))))
		info.ClustersPerSweep = ch.clusters
	} else {
		for i := 0; i < ThermSweeps; i++ {
			ch.Sweep()
		}
	}
	info.BurnIn = ThermSweeps
	maxSweeps := max(MinSeriesSweeps, MaxSeriesUpdates/n)
	var es, ms, sm []float64
	target := MinSeriesSweeps
	for {
		for len(es) < target {
			if len(es)%256 == 0 && ctx.Err() != nil {
				return info, ctx.Err()
			}
			ch.Sweep()
			es = append(es, ch.Energy())
			ms = append(ms, ch.AbsM())
			if !ch.wolff {
				sm = append(sm, ch.M())
			}
		}
		te, _, okE := IntegratedTime(es)
		tm, _, okM := IntegratedTime(ms)
		if !ch.wolff {
			ts, _, okS := IntegratedTime(sm)
			tm, okM = math.Max(tm, ts), okM && okS
		}
		info.TauEnergy, info.TauAbsM = te, tm
		tau := math.Max(te, tm)
		info.TauConverged = okE && okM && float64(len(es)) >= TauRuns*tau
		if info.TauConverged || 2*target > maxSweeps {
			break
		}
		target *= 2
	}
	info.BurnIn += len(es)
	info.SpacingSweeps = max(1, int(math.Ceil(2*math.Max(info.TauEnergy, info.TauAbsM))))
	return info, nil
}
