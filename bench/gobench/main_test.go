package main

import (
	"testing"

	"tidemark/model"
	"tidemark/train"
)

// TestBenchmarksTrainsDefaultActivation checks that, unless told
// otherwise, the benchmark measures the activation train fits by default,
// in the hidden layers and the conditioning net (issue 25: it measured ReLU
// while train fits softplus).
func TestBenchmarksTrainsDefaultActivation(t *testing.T) {
	activation = defaultActivation
	cfg := benchConfig(64, 128, "float64")
	if want := train.DefaultSettings().Arch.Activation; model.Activation(defaultActivation) != want || cfg.Activation != want || cfg.CondActivation != want {
		t.Errorf("benchmark model: -activation default %q, activation %q, conditioning %q; train's default is %q", defaultActivation, cfg.Activation, cfg.CondActivation, want)
	}
}
