package train

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"
	"testing"

	"tidemark/checkpoints"
	"tidemark/data"
)

// TestBagKeepsValidationOut checks the bagging of every member of
// ensembles of several sizes: the validation split is the ensemble's
// (drawn from the base seed, the same for every member and equal to a
// single model's), no validation snapshot is in any member's training
// list, each grid point keeps its number of training snapshots, and the
// resample is drawn with replacement (duplicates occur; bagging as in
// L. Breiman, Machine Learning 24, 123 (1996)).
func TestBagKeepsValidationOut(t *testing.T) {
	ds, _ := isingDataset(t, 4, 4, []float64{1.5, 2.3, 3.5}, 60, 3)
	base := DefaultSettings()
	base.Seed = 17
	single := &run{ds: ds, grid: data.NewGrid(ds), st: base}
	single.split()
	for _, tc := range []struct{ size, k int }{{2, 1}, {2, 2}, {5, 1}, {5, 3}, {5, 5}, {9, 7}} {
		t.Run(fmt.Sprintf("member %d of %d", tc.k, tc.size), func(t *testing.T) {
			r := &run{ds: ds, grid: data.NewGrid(ds), st: MemberSettings(base, tc.size, tc.k)}
			r.split()
			if !slices.EqualFunc(r.valIdx, single.valIdx, slices.Equal) {
				t.Fatalf("validation split differs from the single model's with the base seed")
			}
			val := map[int]bool{}
			for _, v := range r.valIdx {
				for _, i := range v {
					val[i] = true
				}
			}
			for _, i := range r.trainIdx {
				if val[i] {
					t.Fatalf("validation snapshot %d is in the training list", i)
				}
			}
			if len(r.trainIdx) != len(single.trainIdx) {
				t.Errorf("training snapshots: %d, single model %d", len(r.trainIdx), len(single.trainIdx))
			}
			distinct := len(slices.Compact(slices.Clone(r.trainIdx)))
			if distinct == len(r.trainIdx) {
				t.Errorf("no duplicate among %d resampled snapshots: not a resample with replacement", len(r.trainIdx))
			}
		})
	}
}

// TestMemberSeedsIndependentOfSize checks that a member's seeds depend on
// the base seed and its index only.
func TestMemberSeedsIndependentOfSize(t *testing.T) {
	base := DefaultSettings()
	seen := map[uint64]bool{}
	for k := 1; k <= 6; k++ {
		a, b := MemberSettings(base, k, k), MemberSettings(base, 10, k)
		if a.Seed != b.Seed || a.Member.BagSeed != b.Member.BagSeed {
			t.Errorf("member %d: seeds depend on the ensemble size", k)
		}
		if seen[a.Seed] || seen[a.Member.BagSeed] || a.Seed == a.Member.BagSeed {
			t.Errorf("member %d: a seed repeats", k)
		}
		seen[a.Seed], seen[a.Member.BagSeed] = true, true
	}
}

func tinyEnsembleSettings() Settings {
	st := DefaultSettings()
	st.Arch.Hidden = []int{16}
	st.Arch.CondHidden = []int{8}
	st.Epochs, st.Batch = 2, 32
	return st
}

// TestMemberSameAloneOrTogether trains member 2 alone, within an ensemble
// of 3 trained three at a time and within one of 2 trained one at a time:
// its checkpoint's weights must be identical bit for bit.
func TestMemberSameAloneOrTogether(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2.5, 3.5}, 50, 5)
	opt := Options{Settings: tinyEnsembleSettings()}
	ctx := context.Background()
	alone, err := Run(ctx, ds, Options{Settings: MemberSettings(opt.Settings, 3, 2)})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name            string
		e               Ensemble
		at              int
		wantSize, index int
	}{
		{"3 members, 3 at once", Ensemble{Size: 3, Parallel: 3}, 1, 3, 2},
		{"2 members, 1 at a time", Ensemble{Size: 2, Parallel: 1}, 1, 2, 2},
		{"member 2 of 3 named alone", Ensemble{Size: 3, Members: []int{2}, Parallel: 2}, 0, 3, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cks, err := RunEnsemble(ctx, ds, opt, tc.e)
			if err != nil {
				t.Fatal(err)
			}
			ck := cks[tc.at]
			if e := ck.Header.Ensemble; e == nil || e.Size != tc.wantSize || e.Member != tc.index || e.BaseSeed != opt.Settings.Seed {
				t.Fatalf("ensemble record %+v, expected member %d of %d", e, tc.index, tc.wantSize)
			}
			for i := range ck.Best {
				if !slices.Equal(ck.Best[i].Data, alone.Best[i].Data) {
					t.Fatalf("tensor %s differs from member 2 trained alone", ck.Best[i].Name)
				}
			}
		})
	}
	if len(alone.Best) == 0 {
		t.Fatal("no weights")
	}
}

// TestEnsembleRefusesBadMembers checks the one-line errors of RunEnsemble.
func TestEnsembleRefusesBadMembers(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 3.5}, 10, 5)
	for _, tc := range []struct {
		e    Ensemble
		want string
	}{
		{Ensemble{Size: 1}, "ensemble: expected at least 2 members, found 1"},
		{Ensemble{Size: 3, Members: []int{4}}, "member: expected a member 1 to 3 of the ensemble, found 4"},
	} {
		_, err := RunEnsemble(context.Background(), ds, Options{Settings: tinyEnsembleSettings()}, tc.e)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%+v: error %v, expected %q", tc.e, err, tc.want)
		}
	}
	// A bad setting fails every member; the error is a member's
	// own (the first to fail), not the interruption it causes in the others.
	_, err := RunEnsemble(context.Background(), ds, Options{Settings: tinyEnsembleSettings(), Holdout: "T=9"}, Ensemble{Size: 3, Parallel: 2})
	if err == nil || errors.Is(err, ErrInterrupted) || !strings.Contains(err.Error(), ": holdout \"T=9\"") || strings.Contains(err.Error(), "\n") {
		t.Errorf("bad holdout: error %v, expected a member's holdout error on one line", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err = RunEnsemble(ctx, ds, Options{Settings: tinyEnsembleSettings()}, Ensemble{Size: 2, Parallel: 1})
	if !errors.Is(err, ErrInterrupted) {
		t.Errorf("cancelled: error %v, expected one wrapping ErrInterrupted", err)
	}
}

// TestMemberPathNamesSiblings checks the file names of an ensemble's
// members.
func TestMemberPathNamesSiblings(t *testing.T) {
	for _, tc := range []struct {
		out  string
		k    int
		want string
	}{{"m.ckpt", 1, "m.ckpt"}, {"m.ckpt", 2, "m.e2.ckpt"}, {"dir/run.v1.ckpt", 12, "dir/run.v1.e12.ckpt"}, {"noext", 3, "noext.e3"}} {
		if got := checkpoints.MemberPath(tc.out, tc.k); got != tc.want {
			t.Errorf("MemberPath(%q, %d) = %q, expected %q", tc.out, tc.k, got, tc.want)
		}
	}
}

// TestNoResampleTrainsOnAllSnapshots checks that a member of an ensemble
// without resampling trains on the single model's training snapshots,
// and that its checkpoint record says so and survives a reload.
func TestNoResampleTrainsOnAllSnapshots(t *testing.T) {
	ds, _ := isingDataset(t, 3, 3, []float64{1.5, 2.5, 3.5}, 50, 5)
	base := tinyEnsembleSettings()
	single := &run{ds: ds, grid: data.NewGrid(ds), st: base}
	single.split()
	st := MemberSettings(base, 3, 2)
	st.Member.NoResample = true
	r := &run{ds: ds, grid: data.NewGrid(ds), st: st}
	r.split()
	if !slices.Equal(r.trainIdx, single.trainIdx) {
		t.Fatal("a member without resampling trains on other snapshots than the single model")
	}
	cks, err := RunEnsemble(context.Background(), ds, Options{Settings: base}, Ensemble{Size: 2, NoResample: true, Parallel: 1})
	if err != nil {
		t.Fatal(err)
	}
	if e := cks[1].Header.Ensemble; e == nil || !e.NoResample || !SavedSettings(cks[1]).Member.NoResample {
		t.Errorf("ensemble record %+v does not say the member was not resampled", e)
	}
}
