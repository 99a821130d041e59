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

// TestDirectWindowFor checks how the trainer resolves --direct-window.
func TestDirectWindowFor(t *testing.T) {
	for _, tc := range []struct {
		name    string
		w       int
		lattice []int
		want    int
	}{
		{"auto on a 2-D lattice", 0, []int{16, 16}, DefaultDirectWindow},
		{"auto on 32×32", 0, []int{32, 32}, 4},
		{"auto on 64×64", 0, []int{64, 64}, 8},
		{"auto on 48×24", 0, []int{48, 24}, 6},
		{"auto on a chain", 0, []int{32}, 0},
		{"auto without a lattice", 0, nil, 0},
		{"all on a 2-D lattice", -1, []int{16, 16}, 0},
		{"given on a chain", 3, []int{32}, 3},
		{"given on a 2-D lattice", 1, []int{8, 8}, 1},
	} {
		if got := DirectWindowFor(tc.w, tc.lattice); got != tc.want {
			t.Errorf("%s: DirectWindowFor(%d, %v) = %d, want %d", tc.name, tc.w, tc.lattice, got, tc.want)
		}
	}
}
