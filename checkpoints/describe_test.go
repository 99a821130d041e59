package checkpoints

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data"
)

// TestDescribe saves the test checkpoint and checks what Describe reports
// and prints about it.
func TestDescribe(t *testing.T) {
	c := testCheckpoint(t)
	path := filepath.Join(t.TempDir(), "m.ckpt")
	if err := c.Save(path, false); err != nil {
		t.Fatal(err)
	}
	r, err := Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	if r.Kind != "checkpoint" || r.Sites != 9 || r.Parameters != c.NumParams() || len(r.HeldOut) != 1 || len(r.Metrics) != 1 || r.Architecture.CondAct != r.Architecture.Activation {
		t.Errorf("description %+v", r)
	}
	var b bytes.Buffer
	if err := r.WriteText(&b); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"lattice 3×3", "held out", "T=2.2", "best"} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("text lacks %q:\n%s", want, b.String())
		}
	}
}

func TestOutside(t *testing.T) {
	c := testCheckpoint(t) // trained on T in [1, 3]
	for p, want := range map[float64]int{1: -1, 2.5: -1, 3: -1, 0.9: 0, 3.5: 0} {
		if got := c.Outside([]float64{p}); got != want {
			t.Errorf("Outside(T=%v) = %d, want %d", p, got, want)
		}
	}
	if n := c.ExtrapolationNote("--grid", []float64{2}, []float64{3}); n != "" {
		t.Errorf("points inside the range: note %q", n)
	}
	want := "warning: --grid reaches T=3.5, outside the range [1, 3] the model was trained on; the scores there are extrapolations"
	if n := c.ExtrapolationNote("--grid", []float64{2}, []float64{3.5}, []float64{0.5}); n != want {
		t.Errorf("note %q, expected %q", n, want)
	}
}

// TestCheckDatasetAs checks an unlabelled dataset in everything but the
// parameter names: the right size passes, another size is refused.
func TestCheckDatasetAs(t *testing.T) {
	c := testCheckpoint(t)
	for _, tc := range []struct {
		n  int
		ok bool
	}{{9, true}, {4, false}} {
		ds, err := data.New(2, tc.n, nil, 2, []int{tc.n}, map[string]any{"generator": "test"})
		if err != nil {
			t.Fatal(err)
		}
		if tc.n == 9 {
			ds.Meta.Lattice = []int{3, 3}
		}
		if err := c.CheckDatasetAs(ds); (err == nil) != tc.ok {
			t.Errorf("%d sites: %v", tc.n, err)
		}
	}
}
