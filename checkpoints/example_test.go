package checkpoints_test

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"tidemark/checkpoints"
	"tidemark/model"
)

// Example saves a checkpoint, loads it back and rebuilds the model, then
// shows how a damaged file is reported.
func Example() {
	cfg := model.DefaultConfig(4, 2, 1, []float64{1}, []float64{3})
	m, _ := model.New(cfg, 1)
	ck := &checkpoints.Checkpoint{
		Header: checkpoints.Header{Model: cfg, ParamNames: []string{"T"}, Alphabet: 2, Lattice: []int{2, 2}},
		Best:   m.Weights,
		Last:   m.Weights,
	}
	dir, _ := os.MkdirTemp("", "ckpt")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "film.ckpt")
	if err := ck.Save(path, false); err != nil {
		fmt.Println(err)
		return
	}
	got, err := checkpoints.Load(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	mm, _ := got.Model()
	fmt.Println(got.Header.ParamNames, mm.Sites(), "sites,", mm.NumParams() == m.NumParams())

	b, _ := os.ReadFile(path)
	b[len(b)/2] ^= 1
	_, err = checkpoints.Decode(b, "film.ckpt")
	fmt.Println(errors.Is(err, checkpoints.ErrChecksum))
	// Output:
	// [T] 4 sites, true
	// true
}
