package train

import (
	"context"
	"math"
	"testing"
)

// TestUnseenRowsAreTheValidationSplit checks UnseenRows against what the
// run itself recorded: the mean NLL of the best weights over the rows it
// returns at the trained points must be the validation NLL in the
// checkpoint, every row of a held-out point must be unseen, and another
// dataset gets no rows.
func TestUnseenRowsAreTheValidationSplit(t *testing.T) {
	temps := []float64{1.5, 2.0, 2.5, 3.0}
	ds, _ := isingDataset(t, 3, 3, temps, 60, 7)
	for _, tc := range []struct {
		name, holdout string
		seed          uint64
	}{
		{"seed 3", "", 3},
		{"seed 4, T=2.5 held out", "T=2.5", 4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			st := DefaultSettings()
			st.Epochs, st.Seed, st.Arch.Hidden = 1, tc.seed, []int{16}
			ck, err := Run(context.Background(), ds, Options{Settings: st, Holdout: tc.holdout})
			if err != nil {
				t.Fatal(err)
			}
			unseen, err := UnseenRows(ds, ck)
			if err != nil {
				t.Fatal(err)
			}
			m, err := ck.Model()
			if err != nil {
				t.Fatal(err)
			}
			sum, n, perPoint := 0.0, 0, map[float64]int{}
			lp := make([]float64, 1)
			for r := 0; r < ds.M; r++ {
				T := ds.Params[r]
				if T == 2.5 && tc.holdout != "" {
					if !unseen[r] {
						t.Fatalf("row %d at the held-out point T=2.5 is not unseen", r)
					}
					continue
				}
				if !unseen[r] {
					continue
				}
				perPoint[T]++
				if err := m.LogProb(lp, ds.Row(r), ds.ParamRow(r)); err != nil {
					t.Fatal(err)
				}
				sum -= lp[0]
				n++
			}
			for T, c := range perPoint {
				if c != 6 { // ValFrac 0.1 of 60
					t.Errorf("T=%v: %d unseen rows, want 6", T, c)
				}
			}
			got := sum / float64(n) / float64(ds.N) / math.Ln2
			if want := ck.Header.BestValBitsPerSite; math.Abs(got-want) > 1e-9*math.Abs(want) {
				t.Errorf("NLL over the unseen rows %.12f bits/site, the run's validation NLL %.12f", got, want)
			}
		})
	}
	other, _ := isingDataset(t, 3, 3, temps, 60, 8)
	st := DefaultSettings()
	st.Epochs, st.Arch.Hidden = 1, []int{16}
	ck, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	if u, err := UnseenRows(other, ck); err != nil || u != nil {
		t.Errorf("another dataset: got %d rows and error %v, want none", len(u), err)
	}
}
