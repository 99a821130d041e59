package main

import (
	"context"
	"fmt"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator"
)

// exactBeside scans the same data with the exact density of the dataset's
// generator, on the data's grid (no refinement or zoom: the exact source of
// a large lattice only scores snapshots), for the pictures to draw beside
// the model's curves.
func exactBeside(ctx context.Context, ds *data.Dataset, cfg indicator.Config, o *scanOptions) (*indicator.Result, error) {
	src, err := density.ReferenceFor(ds.Meta)
	if err != nil {
		return nil, fmt.Errorf("scan --exact: %s: %w", o.data, err)
	}
	cfg.Refine, cfg.Zoom, cfg.KeepDataLogLik = 1, false, false
	res, stopped, err := scanWithProgress(ctx, []density.Source{src}, ds, cfg, o.quiet)
	if stopped {
		return nil, fmt.Errorf("scan: stopped before any output was written: %w", errInterrupted)
	}
	if err != nil {
		return nil, fmt.Errorf("scan --exact beside the model: %w", err)
	}
	return res, nil
}
