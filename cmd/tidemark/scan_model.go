package main

import (
	"fmt"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
)

// loadModelSource opens a checkpoint as a density source for scan: it loads
// the .ckpt (naming what failed: magic, version, length, checksum), refuses a
// dataset that does not fit the model (sites, alphabet, lattice, parameter
// names), and returns the best weights' conditioned MADE, which is an
// density.Sampler and a density.MatrixSource.
func loadModelSource(path string, ds *data.Dataset) (density.Source, *checkpoints.Checkpoint, error) {
	ck, err := checkpoints.Load(path)
	if err != nil {
		return nil, nil, err
	}
	if err := ck.CheckDataset(ds); err != nil {
		return nil, nil, fmt.Errorf("%s does not fit the dataset: %w", path, err)
	}
	m, err := ck.Model()
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	return m, ck, nil
}
