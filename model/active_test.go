package model

import (
	"strings"
	"testing"
)

// TestActiveRunsCoverTheMask checks that the runs of every masked weight
// hold exactly its entries inside the mask, for orders that keep the runs
// long and one that scatters them.
func TestActiveRunsCoverTheMask(t *testing.T) {
	for _, tc := range []struct {
		name   string
		order  func(n int) []int
		listed bool // some weight gets runs
		window int  // a direct-connection window on a 16×16 lattice (0: none, 8×8 sites)
	}{
		{"row-major", RowMajorOrder, true, 0},
		{"reversed", func(n int) []int {
			o := RowMajorOrder(n)
			for i, j := 0, n-1; i < j; i, j = i+1, j-1 {
				o[i], o[j] = o[j], o[i]
			}
			return o
		}, true, 0},
		{"shuffled", func(n int) []int {
			o := RowMajorOrder(n)
			for i := range o { // a fixed permutation: i ↦ 37·i mod n
				o[i] = 37 * i % n
			}
			return o
		}, true, 0},
		// One run per lattice row of the window, at most 5 entries long,
		// but long gaps between them: still listed.
		{"row-major, window 2", RowMajorOrder, true, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			n, lattice := 64, []int{8, 8}
			if tc.window > 0 {
				// On 8×8 the gaps between a window's runs are too short
				// to be worth skipping.
				n, lattice = 256, []int{16, 16}
			}
			cfg := DefaultConfig(n, 2, 1, []float64{1}, []float64{3})
			cfg.Order = tc.order(n)
			if tc.window > 0 {
				cfg.DirectWindow, cfg.Lattice = tc.window, lattice
			}
			m, err := New(cfg, 1)
			if err != nil {
				t.Fatal(err)
			}
			runs := m.ActiveRuns()
			if len(runs) != len(m.Weights) {
				t.Fatalf("%d run lists for %d weights", len(runs), len(m.Weights))
			}
			listed := false
			for w, rs := range runs {
				mask := m.maskOf(w)
				if rs == nil {
					if mask != nil && strings.HasPrefix(tc.name, "row-major") {
						t.Errorf("%s: masked, but no runs in site order", m.Weights[w].Name)
					}
					continue
				}
				listed = true
				in := make([]bool, len(m.Weights[w].Data))
				prev := -1
				for _, r := range rs {
					if r[0] <= prev || r[1] <= r[0] {
						t.Fatalf("%s: runs not increasing: %v", m.Weights[w].Name, rs)
					}
					prev = r[1]
					for j := r[0]; j < r[1]; j++ {
						in[j] = true
					}
				}
				for j, v := range mask {
					if (v != 0) != in[j] {
						t.Fatalf("%s: entry %d has mask %v but inside a run: %v", m.Weights[w].Name, j, v, in[j])
					}
					if v == 0 && m.Weights[w].Data[j] != 0 {
						t.Fatalf("%s: entry %d outside the mask is %v, not 0", m.Weights[w].Name, j, m.Weights[w].Data[j])
					}
				}
			}
			if listed != tc.listed {
				t.Errorf("some weight has runs: %v, want %v", listed, tc.listed)
			}
		})
	}
}
