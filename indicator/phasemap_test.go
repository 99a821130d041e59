package indicator_test

import (
	"context"
	"testing"

	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
)

// TestPhaseDiagramIsing4x4 scans the periodic 4×4 Ising model over (T, Jy)
// at Jx = 1 with exact sums, through two sources (the ensemble path): the
// Fisher map divides the grid into an ordered and a disordered phase, and
// the boundary moves to higher T as Jy grows, the direction of Onsager's
// condition sinh(2Jx/T)·sinh(2Jy/T) = 1 (L. Onsager, Phys. Rev. 65, 117
// (1944); on 4×4 only the direction is expected to hold).
func TestPhaseDiagramIsing4x4(t *testing.T) {
	var srcs []density.Source
	for i := 0; i < 2; i++ {
		src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T", "Jy"}, ising.Couplings{Jx: 1})
		if err != nil {
			t.Fatal(err)
		}
		srcs = append(srcs, src)
	}
	ts := linspace(1, 4, 13)
	js := linspace(0.5, 1.5, 5)
	var pts [][]float64
	for _, x := range ts {
		for _, y := range js {
			pts = append(pts, []float64{x, y})
		}
	}
	ds := gridDataset(t, 16, []string{"T", "Jy"}, pts)
	res, err := indicator.Run(context.Background(), srcs, ds, indicator.Config{ExactSums: true, Indicators: []string{indicator.Fisher}, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	if res.Phases == nil || res.Phases.Primary < 0 {
		t.Fatal("no phase diagram")
	}
	m := res.Phases.Maps[res.Phases.Primary]
	if m.Indicator != indicator.Fisher || m.Phases.Count != 2 || len(m.Phases.Labels) != len(pts) {
		t.Fatalf("map %s: %d phases, %d labels; want fisher, 2 and %d", m.Indicator, m.Phases.Count, len(m.Phases.Labels), len(pts))
	}
	// The lowest and highest T at every Jy lie in different phases.
	for j := range js {
		if m.Phases.Labels[j] == m.Phases.Labels[(len(ts)-1)*len(js)+j] {
			t.Errorf("Jy=%g: T=%g and T=%g in the same phase", js[j], ts[0], ts[len(ts)-1])
		}
	}
	// Along T at each Jy: the crossing rises with Jy.
	at := map[float64]float64{}
	for _, b := range m.Boundaries {
		for i, p := range b.Points {
			if b.Along[i] == 0 {
				at[p[1]] = p[0]
			}
		}
	}
	for j := 1; j < len(js); j++ {
		a, okA := at[js[j-1]]
		b, okB := at[js[j]]
		if !okA || !okB || !(b > a) {
			t.Errorf("boundary along T at Jy=%g: %g, at Jy=%g: %g; want rising", js[j-1], a, js[j], b)
		}
	}
	t.Logf("boundary along T: %v", at)
}
