package train

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"tidemark/checkpoints"
	"tidemark/model"
)

func smallSettings() Settings {
	st := DefaultSettings()
	st.Epochs = 4
	st.Batch = 64
	st.Arch.Hidden = []int{16}
	st.Arch.CondHidden = []int{8}
	return st
}

func sameTensors(t *testing.T, what string, a, b []model.Tensor) {
	t.Helper()
	if len(a) != len(b) {
		t.Fatalf("%s: %d tensors, want %d", what, len(b), len(a))
	}
	for i := range a {
		if !slices.Equal(a[i].Data, b[i].Data) {
			t.Fatalf("%s: tensor %s differs", what, a[i].Name)
		}
	}
}

func TestDeterministic(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 200, 3)
	st := smallSettings()
	a, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	sameTensors(t, "best", a.Best, b.Best)
	sameTensors(t, "last", a.Last, b.Last)
	st.Seed = 2
	c, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	if slices.Equal(a.Last[0].Data, c.Last[0].Data) {
		t.Fatal("a different seed gave the same weights")
	}
}

// TestThreads checks that splitting minibatches over two graphs changes
// results only by floating-point summation order.
func TestThreads(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 200, 3)
	st := smallSettings()
	st.Epochs = 2
	a, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	st.Threads = 2
	b, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	for i := range a.Last {
		for j, v := range a.Last[i].Data {
			if w := b.Last[i].Data[j]; math.Abs(v-w) > 1e-8*math.Max(1, math.Abs(v)) {
				t.Fatalf("tensor %s[%d]: %v with 1 thread, %v with 2", a.Last[i].Name, j, v, w)
			}
		}
	}
	va, vb := a.Header.Metrics[1].ValBitsPerSite, b.Header.Metrics[1].ValBitsPerSite
	if math.Abs(va-vb) > 1e-9 {
		t.Fatalf("validation NLL %v with 1 thread, %v with 2", va, vb)
	}
}

// TestResumeExact stops a run after 2 epochs, round-trips its checkpoint
// through the file format and resumes it: the result must equal the
// uninterrupted run bit for bit, with and without weight averaging (whose
// accumulator the checkpoint carries).
func TestResumeExact(t *testing.T) {
	for _, avg := range []float64{0, 1.5} {
		t.Run(fmt.Sprintf("average=%v", avg), func(t *testing.T) {
			ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 200, 5)
			st := smallSettings()
			st.Epochs = 5
			st.Average = avg
			full, err := Run(context.Background(), ds, Options{Settings: st, Holdout: "T=2"})
			if err != nil {
				t.Fatal(err)
			}
			if (full.Average != nil) != (avg > 0) || full.Header.Training.AverageEpochs != avg {
				t.Fatalf("average %v: checkpoint has %d averaged tensors, records %v epochs", avg, len(full.Average), full.Header.Training.AverageEpochs)
			}
			part, err := Run(context.Background(), ds, Options{Settings: st, Holdout: "T=2", StopAfter: 2})
			if err != nil {
				t.Fatal(err)
			}
			if part.Header.Stopped != "stop-after limit" || part.Header.Optimizer.Epoch != 2 {
				t.Fatalf("stopped %q at epoch %d, want \"stop-after limit\" at 2", part.Header.Stopped, part.Header.Optimizer.Epoch)
			}
			b, err := part.Bytes()
			if err != nil {
				t.Fatal(err)
			}
			loaded, err := checkpoints.Decode(b, "part.ckpt")
			if err != nil {
				t.Fatal(err)
			}
			res, err := Run(context.Background(), ds, Options{Resume: &Resume{From: loaded}})
			if err != nil {
				t.Fatal(err)
			}
			sameTensors(t, "last", full.Last, res.Last)
			sameTensors(t, "best", full.Best, res.Best)
			sameTensors(t, "adam m", full.AdamM, res.AdamM)
			if avg > 0 {
				sameTensors(t, "average", full.Average, res.Average)
			}
			if len(res.Header.Metrics) != 5 || res.Header.BestEpoch != full.Header.BestEpoch {
				t.Fatalf("resumed run has %d epochs, best %d; want 5, best %d", len(res.Header.Metrics), res.Header.BestEpoch, full.Header.BestEpoch)
			}
			for i, m := range full.Header.Metrics {
				if res.Header.Metrics[i].ValBitsPerSite != m.ValBitsPerSite {
					t.Fatalf("epoch %d: validation %v resumed, %v uninterrupted", i+1, res.Header.Metrics[i].ValBitsPerSite, m.ValBitsPerSite)
				}
			}
			if !slices.Equal(res.Header.HeldOut[0], []float64{2}) {
				t.Fatalf("held-out points after resume: %v", res.Header.HeldOut)
			}

			// A different dataset is refused.
			ds.States[0] ^= 1
			_, err = Run(context.Background(), ds, Options{Resume: &Resume{From: loaded}})
			if err == nil || !strings.Contains(err.Error(), "different dataset") {
				t.Fatalf("resume on changed data: %v", err)
			}
		})
	}
}

// TestInterrupt cancels during the second epoch: the checkpoint returned
// holds exactly the state after epoch 1.
func TestInterrupt(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 200, 5)
	st := smallSettings()
	one, err := Run(context.Background(), ds, Options{Settings: st, StopAfter: 1})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	epochs := 0
	batches := 0
	ck, err := Run(ctx, ds, Options{Settings: st,
		OnEpoch: func(checkpoints.EpochMetrics, *checkpoints.Checkpoint) error { epochs++; return nil },
		Progress: func(int) {
			batches++
			if epochs == 1 && batches > 12 {
				cancel()
			}
		},
	})
	if !errors.Is(err, ErrInterrupted) {
		t.Fatalf("error %v, want ErrInterrupted", err)
	}
	if ck == nil || ck.Header.Stopped != "interrupted" || ck.Header.Optimizer.Epoch != 1 {
		t.Fatalf("checkpoint after interrupt: %+v", ck)
	}
	sameTensors(t, "last", one.Last, ck.Last)
}

// TestNonFinite injects non-finite losses: one is recovered from by
// restoring the weights and halving the rate; three in a row stop training.
func TestNonFinite(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2, 2.5, 3}, 200, 5)
	st := smallSettings()
	st.Epochs = 3
	defer func() { faultHook = nil }()
	faults := map[int]int{2: 1}
	faultHook = func(epoch int) bool {
		if faults[epoch] > 0 {
			faults[epoch]--
			return true
		}
		return false
	}
	var warns []string
	ck, err := Run(context.Background(), ds, Options{Settings: st, Warn: func(s string) { warns = append(warns, s) }})
	if err != nil {
		t.Fatal(err)
	}
	if len(warns) != 1 || !strings.Contains(warns[0], "halved the learning rate") {
		t.Fatalf("warnings %q", warns)
	}
	if got := ck.Header.Metrics[1].LR; got != st.LR/2 {
		t.Fatalf("learning rate after the fault %v, want %v", got, st.LR/2)
	}
	if len(ck.Header.Metrics) != 3 {
		t.Fatalf("%d epochs recorded, want 3", len(ck.Header.Metrics))
	}

	// Under the cosine schedule the halving persists through the schedule.
	st.Schedule = "cosine"
	faults = map[int]int{2: 1}
	ck, err = Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	st.Schedule = "cosine"
	ref, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	for e := 1; e < 3; e++ {
		if got, want := ck.Header.Metrics[e].LR, ref.Header.Metrics[e].LR/2; math.Abs(got-want) > 1e-15 {
			t.Fatalf("cosine epoch %d: rate %v after a fault, want %v", e+1, got, want)
		}
	}
	st.Schedule = "plateau"

	faults = map[int]int{2: 3}
	_, err = Run(context.Background(), ds, Options{Settings: st})
	if err == nil || !strings.Contains(err.Error(), "not finite in 3 epochs in a row") {
		t.Fatalf("three faults: %v", err)
	}
}

func TestSettingsValidate(t *testing.T) {
	cases := []struct {
		name string
		mod  func(*Settings)
		want string
	}{
		{"epochs", func(s *Settings) { s.Epochs = 0 }, "epochs"},
		{"batch", func(s *Settings) { s.Batch = 0 }, "batch"},
		{"lr", func(s *Settings) { s.LR = -1 }, "lr"},
		{"val-frac", func(s *Settings) { s.ValFrac = 1 }, "val-frac"},
		{"schedule", func(s *Settings) { s.Schedule = "step" }, "schedule"},
		{"order", func(s *Settings) { s.Arch.Order = "hilbert" }, "order"},
		{"threads", func(s *Settings) { s.Threads = 0 }, "threads"},
	}
	if err := DefaultSettings().Validate(); err != nil {
		t.Fatal(err)
	}
	for _, tc := range cases {
		st := DefaultSettings()
		tc.mod(&st)
		if err := st.Validate(); err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one starting %q", tc.name, err, tc.want)
		}
	}
}
