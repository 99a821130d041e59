package model

import (
	"runtime"
	"sync/atomic"
	"testing"
	"time"
)

// peakHeapDuring runs f and returns the largest growth of the live heap
// (runtime.MemStats.HeapAlloc after a collection before f) seen while f
// ran, sampled every millisecond and at the end.
func peakHeapDuring(f func() error) (int, error) {
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	base := ms.HeapAlloc
	var peak atomic.Uint64
	done := make(chan struct{})
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		var s runtime.MemStats
		for {
			select {
			case <-done:
				return
			case <-time.After(time.Millisecond):
				runtime.ReadMemStats(&s)
				if s.HeapAlloc > base && s.HeapAlloc-base > peak.Load() {
					peak.Store(s.HeapAlloc - base)
				}
			}
		}
	}()
	err := f()
	close(done)
	<-stopped
	runtime.ReadMemStats(&ms)
	if ms.HeapAlloc > base && ms.HeapAlloc-base > peak.Load() {
		peak.Store(ms.HeapAlloc - base)
	}
	return int(peak.Load()), err
}

// TestLogProbMatrixStreams checks that LogProbMatrix allocates O(n·K) for
// its output plus scratch that does not grow with n: the total allocation
// of a call (runtime.MemStats.TotalAlloc) must stay below the output plus a
// bound independent of n (workspaces of blockRows snapshots per thread,
// masked weight copies and per-λ biases). Holding an n×H activation matrix
// per λ would need n·H·K·8 bytes, here 100 times more than the bound.
func TestLogProbMatrixStreams(t *testing.T) {
	if raceEnabled {
		t.Skip("the race detector makes sync.Pool drop items at random: allocation is measured without -race")
	}
	cfg := DefaultConfig(64, 2, 1, []float64{0}, []float64{1})
	cfg.Hidden = []int{64, 64}
	m, err := New(cfg, 2)
	if err != nil {
		t.Fatal(err)
	}
	const K = 4
	ls := lambdas(K)
	extra := func(n int) uint64 {
		xs, _ := randomBatch(cfg, n, 3)
		var a, b runtime.MemStats
		runtime.ReadMemStats(&a)
		if _, err := m.LogProbMatrix(xs, n, ls, 2); err != nil {
			t.Fatal(err)
		}
		runtime.ReadMemStats(&b)
		return b.TotalAlloc - a.TotalAlloc - uint64(8*n*K)
	}
	small, large := extra(1000), extra(20000)
	// 20000 snapshots × 64 units × 4 λ × 8 bytes = 41 MB if activations were kept.
	if large > small+(1<<20) {
		t.Errorf("LogProbMatrix scratch grows with n: %d bytes beyond the output for 1000 snapshots, %d for 20000", small, large)
	}
	if large > 4<<20 {
		t.Errorf("LogProbMatrix allocates %d bytes beyond its output for 20000 snapshots, want < 4 MB", large)
	}
	t.Logf("scratch beyond the output: %d bytes (n=1000), %d bytes (n=20000)", small, large)
}
