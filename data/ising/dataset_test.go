package ising

import (
	"context"
	"testing"
)

// TestResultDataset simulates exact samples of a 3×3 lattice in a field and
// checks that the dataset's source record rebuilds the same exact density.
func TestResultDataset(t *testing.T) {
	cfg := Config{
		Lattice: Lattice{Ly: 3, Lx: 3}, Fixed: Couplings{Jx: 1, Jy: 0.5, H: 0.2}, Axes: []string{"T"},
		Points: [][]float64{{2}, {3}}, Samples: 4, Enumerated: true, Seed: 9, Threads: 1,
	}
	res, err := Simulate(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	ds, err := res.Dataset(cfg, "T=2;3")
	if err != nil {
		t.Fatal(err)
	}
	if err := ds.Validate("test"); err != nil {
		t.Fatal(err)
	}
	src, err := SourceFromMeta(ds.Meta)
	if err != nil {
		t.Fatal(err)
	}
	want, err := NewSource(cfg.Lattice, cfg.Axes, cfg.Fixed)
	if err != nil {
		t.Fatal(err)
	}
	a, b := make([]float64, ds.M), make([]float64, ds.M)
	if err := src.LogProb(a, ds.States, []float64{2.5}); err != nil {
		t.Fatal(err)
	}
	if err := want.LogProb(b, ds.States, []float64{2.5}); err != nil {
		t.Fatal(err)
	}
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("snapshot %d: rebuilt density %v, want %v", i, a[i], b[i])
		}
	}
	if ds.M != 8 || ds.Params[7] != 3 {
		t.Errorf("M = %d, params %v", ds.M, ds.Params)
	}
}
