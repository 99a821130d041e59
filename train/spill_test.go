package train

import (
	"context"
	"math"
	"slices"
	"testing"

	"tidemark/model"
)

// checkpointTensors are the tensor sections of a checkpoint.
type checkpointTensors struct{ best, last, m, v []model.Tensor }

// TestSpillRoundTrip checks that load gives back exactly the values
// newSpill saved, after they were overwritten, NaN and signed zeros
// included.
func TestSpillRoundTrip(t *testing.T) {
	a := [][]float64{{1, -0.0, math.NaN(), math.Inf(-1)}, {}, {math.SmallestNonzeroFloat64}}
	b := [][]float64{{3, 4}}
	want := [][]float64{clone2(a)[0], nil, clone2(a)[2], clone2(b)[0]}
	s, err := newSpill(a, nil, b)
	if err != nil {
		t.Fatal(err)
	}
	defer s.close()
	for _, g := range [][][]float64{a, b} {
		for _, x := range g {
			for i := range x {
				x[i] = 7
			}
		}
	}
	if err := s.load(a, nil, b); err != nil {
		t.Fatal(err)
	}
	got := [][]float64{a[0], nil, a[2], b[0]}
	for i := range got {
		if !slices.EqualFunc(got[i], want[i], func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }) {
			t.Fatalf("array %d: got %v, want %v", i, got[i], want[i])
		}
	}
	if err := s.load([][]float64{make([]float64, 100)}); err == nil {
		t.Fatal("loading more values than were saved: no error")
	}
}

// TestSpillRecovery checks that the state saved before an epoch in a
// temporary file (large models) restores a non-finite epoch exactly as the
// in-memory copy (small models) does, with and without weight averaging.
func TestSpillRecovery(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 200, 5)
	defer func(v int) { spillValues = v; faultHook = nil }(spillValues)
	for _, avg := range []float64{0, 1.5} {
		st := smallSettings()
		st.Epochs = 3
		st.Average = avg
		run := func(spill int) *checkpointTensors {
			spillValues = spill
			faults := map[int]int{2: 1}
			faultHook = func(epoch int) bool {
				if faults[epoch] > 0 {
					faults[epoch]--
					return true
				}
				return false
			}
			warned := 0
			ck, err := Run(context.Background(), ds, Options{Settings: st, Warn: func(string) { warned++ }})
			if err != nil {
				t.Fatal(err)
			}
			if warned != 1 {
				t.Fatalf("average %v, spill above %d: %d recoveries, want 1", avg, spill, warned)
			}
			return &checkpointTensors{ck.Best, ck.Last, ck.AdamM, ck.AdamV}
		}
		mem, file := run(1<<30), run(0)
		sameTensors(t, "best", mem.best, file.best)
		sameTensors(t, "last", mem.last, file.last)
		sameTensors(t, "adam m", mem.m, file.m)
		sameTensors(t, "adam v", mem.v, file.v)
	}
}
