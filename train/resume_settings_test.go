package train

import (
	"slices"
	"testing"
	"tidemark/data/density"
)

// TestDifferences checks which settings count as changed: only those named,
// and with "" precision and conditioning activation read as their defaults.
func TestDifferences(t *testing.T) {
	a := DefaultSettings()
	b := DefaultSettings()
	b.LR, b.Seed = a.LR*2, a.Seed+1
	b.Arch.Precision, a.Arch.Precision = "float64", ""
	b.Arch.CondActivation = b.Arch.Activation
	b.Augment = []density.Symmetry{}
	got := Differences(a, b, FixedOnResume)
	if want := []string{"lr", "seed"}; !slices.Equal(got, want) {
		t.Errorf("Differences = %v, want %v", got, want)
	}
	if got := Differences(a, b, []string{"batch", "seed"}); !slices.Equal(got, []string{"seed"}) {
		t.Errorf("Differences over batch, seed = %v, want [seed]", got)
	}
}
