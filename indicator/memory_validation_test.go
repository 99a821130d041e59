//go:build validation

package indicator

import (
	"context"
	"runtime"
	"runtime/metrics"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// TestScanMemoryMillionSnapshots scans 10^6 snapshots of 256 sites (21
// temperatures × 47619) with all indicators and 100 bootstrap replicates,
// using the fast independent-site fake source so that only the indicator
// code's memory is measured, and requires the Go heap to stay under 2 GB
// (the performance issue's bound on resident memory; the states alone are
// 256 MB).
func TestScanMemoryMillionSnapshots(t *testing.T) {
	src := &densitytest.Logistic{N: 256, D: 1, A: 2, C: 2.3}
	ds := bernoulliData(src, linspace(1.5, 3.5, 21), nil, 47619, 1)
	runtime.GC()
	stop := make(chan struct{})
	peak := make(chan uint64)
	go func() {
		// Resident: everything the runtime has mapped, less the heap
		// pages it has returned to the operating system.
		s := []metrics.Sample{{Name: "/memory/classes/total:bytes"}, {Name: "/memory/classes/heap/released:bytes"}}
		var max uint64
		for {
			metrics.Read(s)
			if v := s[0].Value.Uint64() - s[1].Value.Uint64(); v > max {
				max = v
			}
			select {
			case <-stop:
				peak <- max
				return
			default:
				runtime.Gosched()
			}
		}
	}()
	if _, err := Run(context.Background(), []density.Source{src}, ds, Config{Bootstrap: 100, Threads: 2, Seed: 1}); err != nil {
		t.Fatal(err)
	}
	close(stop)
	p := <-peak
	t.Logf("peak resident memory of the Go runtime: %.0f MB for %d snapshots of %d sites", float64(p)/(1<<20), ds.M, ds.N)
	if p > 2<<30 {
		t.Errorf("peak memory %.0f MB, want under 2048 MB", float64(p)/(1<<20))
	}
}
