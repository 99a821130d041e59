package main

import (
	"fmt"

	"tidemark/indicator"
)

// loadModelSource opens a checkpoint as a density source for scan.
//
// TODO(lead): wire this to the checkpoints package (load the .ckpt, check it
// matches the dataset, return the conditioned MADE, which implements
// indicator.Sampler and optionally indicator.MatrixSource). Until then it
// refuses with a clear error.
func loadModelSource(path string) (indicator.Source, error) {
	return nil, fmt.Errorf("%s: model loading not available yet (use --exact or --histogram)", path)
}
