package scorestat

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"tidemark/data"
	"tidemark/model"
)

// streamFixture writes m random snapshots of 6×6 sites labelled with the
// temperatures temps (drawn at random per snapshot) to a file and returns
// a freshly initialised model of the given precision, the dataset and the
// file's path.
func streamFixture(t *testing.T, precision string, m int, temps []float64) (*model.Model, *data.Dataset, string) {
	t.Helper()
	ds, err := data.New(m, 36, []string{"T"}, 2, []int{6, 6}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, uint64(m)))
	for i := range ds.States {
		ds.States[i] = uint8(rng.IntN(2))
	}
	for i := range ds.Params {
		ds.Params[i] = temps[rng.IntN(len(temps))]
	}
	// Every point needs two snapshots.
	for k, T := range temps {
		ds.Params[2*k], ds.Params[2*k+1] = T, T
	}
	path := filepath.Join(t.TempDir(), "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	cfg := model.DefaultConfig(36, 2, 1, []float64{1.5}, []float64{3.5})
	cfg.Precision = precision
	mdl, err := model.New(cfg, 3)
	if err != nil {
		t.Fatal(err)
	}
	return mdl, ds, path
}

// TestScoreStreamMatchesScore checks that scoring a file in blocks gives
// the in-memory scores bit for bit, for blocks that do and do not divide
// the number of snapshots or the job size, one-point and three-point
// grids, scoring at one λ or at each snapshot's own, and any threads.
func TestScoreStreamMatchesScore(t *testing.T) {
	for _, tc := range []struct {
		precision string
		m         int
		temps     []float64
		at        []float64
		blocks    []int
	}{
		{model.PrecisionFloat32, 2600, []float64{2.5}, []float64{2.5}, []int{1, 7, 1000, 1024, 0}},
		{model.PrecisionFloat32, 2600, []float64{2, 2.5, 3}, []float64{2.25}, []int{7, 1000, 0}},
		{model.PrecisionFloat32, 2600, []float64{2, 2.5, 3}, nil, []int{1, 7, 1000, 2048, 0}},
		{model.PrecisionFloat32, 2600, []float64{2.5}, nil, []int{7, 2600}},
		{model.PrecisionFloat64, 1100, []float64{2, 3}, nil, []int{7, 0}},
		{model.PrecisionFloat64, 1100, []float64{2}, []float64{2}, []int{5, 0}},
	} {
		mdl, ds, path := streamFixture(t, tc.precision, tc.m, tc.temps)
		for _, threads := range []int{1, 2, 3} {
			want, wantParams, err := Score(mdl, ds, tc.at, threads, nil)
			if err != nil {
				t.Fatal(err)
			}
			for _, blk := range tc.blocks {
				name := fmt.Sprintf("%s M=%d points=%d at=%v threads=%d block=%d", tc.precision, tc.m, len(tc.temps), tc.at, threads, blk)
				st, err := data.OpenStream(path, data.ReadOptions{Unlabelled: tc.at != nil})
				if err != nil {
					t.Fatal(err)
				}
				var seen int
				got, params, err := ScoreStream(mdl, st, tc.at, blk, threads, func(k int) { seen += k })
				st.Close()
				if err != nil {
					t.Fatalf("%s: %v", name, err)
				}
				if !slices.Equal(got, want) || !slices.Equal(params, wantParams) {
					for i := range got {
						if got[i] != want[i] || params[i] != wantParams[i] {
							t.Errorf("%s: snapshot %d scored %v at %v, in memory %v at %v", name, i, got[i], params[i], want[i], wantParams[i])
							break
						}
					}
				}
				if threads == 1 && seen != tc.m {
					t.Errorf("%s: progress counted %d snapshots, want %d", name, seen, tc.m)
				}
			}
		}
	}
}

// A value outside the alphabet deep in the file gets Read's message.
func TestScoreStreamReportsBadValues(t *testing.T) {
	mdl, ds, _ := streamFixture(t, model.PrecisionFloat32, 2600, []float64{2.5})
	ds.States[2345*36+7] = 2
	path := filepath.Join(t.TempDir(), "bad.npz")
	b, err := ds.Bytes()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	_, rerr := data.Read(path)
	if rerr == nil {
		t.Fatal("Read accepted a value of 2 with alphabet 2")
	}
	for _, blk := range []int{7, 0} {
		st, err := data.OpenStream(path, data.ReadOptions{})
		if err != nil {
			t.Fatal(err)
		}
		_, _, err = ScoreStream(mdl, st, []float64{2.5}, blk, 2, nil)
		st.Close()
		if err == nil || err.Error() != rerr.Error() {
			t.Errorf("block %d: %v, want Read's %q", blk, err, rerr)
		}
	}
}
