package chain

import (
	"context"
	"runtime"
	"testing"
)

// benchSimulateMPS times the whole MPS path of simulate chain: ground states
// of the open transverse-field chain at 21 grid points (warm-started runs in
// parallel on GOMAXPROCS goroutines) and 2,000 random-basis snapshots per
// point. Each iteration uses a fresh source, so nothing is cached.
func benchSimulateMPS(b *testing.B, n int) {
	points := make([][]float64, 21)
	for k := range points {
		points[k] = []float64{0.5 + float64(k)*0.05}
	}
	worst, bond := 0.0, 0
	for b.Loop() {
		s, err := NewMPS(Config{Sites: n, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Open: true, Basis: BasisRandom}, MPSOptions{MaxBond: 64}, 1)
		if err != nil {
			b.Fatal(err)
		}
		res, err := SimulateMPS(context.Background(), s, points, 2000, 1, runtime.GOMAXPROCS(0), nil, nil)
		if err != nil {
			b.Fatal(err)
		}
		for _, p := range res.Points {
			worst, bond = max(worst, p.MaxDiscarded), max(bond, p.Bond)
		}
	}
	b.ReportMetric(worst/1e-12, "max-discarded/1e-12")
	b.ReportMetric(float64(bond), "max-bond")
}

func BenchmarkSimulateMPSIsing64(b *testing.B)  { benchSimulateMPS(b, 64) }
func BenchmarkSimulateMPSIsing128(b *testing.B) { benchSimulateMPS(b, 128) }
