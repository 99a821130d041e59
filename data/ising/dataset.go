package ising

import "tidemark/data"

// Dataset packs the snapshots of a simulation run with cfg into a dataset
// whose meta.source records every setting that rebuilds its exact
// reference (SourceMeta); grid is the grid specification to record.
func (r *Result) Dataset(cfg Config, grid string) (*data.Dataset, error) {
	meta := SourceMeta{
		Generator: "ising", Lattice: []int{cfg.Lattice.Ly, cfg.Lattice.Lx}, Boundary: "periodic",
		Jx: cfg.Fixed.Jx, Jy: cfg.Fixed.Jy, Field: cfg.Fixed.H, Temperature: cfg.Fixed.T,
		Grid: grid, Axes: cfg.Axes, Samples: cfg.Samples, ExactSamples: cfg.Enumerated, Seed: cfg.Seed, Points: r.Points,
	}
	ds, err := data.New(len(cfg.Points)*cfg.Samples, cfg.Lattice.N(), cfg.Axes, 2, meta.Lattice, meta)
	if err != nil {
		return nil, err
	}
	ds.States, ds.Params = r.States, r.Params
	return ds, nil
}
