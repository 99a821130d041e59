package checkpoints

import (
	"path/filepath"
	"testing"

	"tidemark/model"
)

// TestConvRoundTrip checks that a convolutional model's configuration
// (model.Config.Conv) and weights survive a save and load, and that the
// loaded model scores as the saved one did.
func TestConvRoundTrip(t *testing.T) {
	cfg := model.DefaultConfig(9, 2, 1, []float64{1}, []float64{3})
	cfg.Hidden = []int{4, 4}
	cfg.CondHidden = []int{4}
	cfg.Conv = &model.ConvConfig{Height: 3, Width: 3, Window: 2}
	m, err := model.New(cfg, 7)
	if err != nil {
		t.Fatal(err)
	}
	c := &Checkpoint{
		Header: Header{Software: "test", Model: cfg, ParamNames: []string{"T"}, Alphabet: 2, Lattice: []int{3, 3},
			Optimizer: OptimizerState{Method: "adam"}},
		Best: cloneTensors(m.Weights),
		Last: cloneTensors(m.Weights),
	}
	path := filepath.Join(t.TempDir(), "c.ckpt")
	if err := c.Save(path, false); err != nil {
		t.Fatal(err)
	}
	got, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if got.Header.Model.Conv == nil || *got.Header.Model.Conv != *cfg.Conv {
		t.Fatalf("conv configuration %+v after the round trip, want %+v", got.Header.Model.Conv, cfg.Conv)
	}
	m2, err := got.Model()
	if err != nil {
		t.Fatal(err)
	}
	xs := []uint8{0, 1, 1, 0, 0, 1, 1, 1, 0}
	a, b := make([]float64, 1), make([]float64, 1)
	if err := m.LogProb(a, xs, []float64{2}); err != nil {
		t.Fatal(err)
	}
	if err := m2.LogProb(b, xs, []float64{2}); err != nil {
		t.Fatal(err)
	}
	if a[0] != b[0] {
		t.Fatalf("log p %v after the round trip, %v before", b[0], a[0])
	}
}
