package main

import (
	"path/filepath"
	"slices"
	"testing"

	"tidemark/checkpoints"
)

// TestTrainAugmentAuto checks that --augment auto trains with the
// symmetries a simulated dataset's source record states (the isotropic
// zero-field Ising model on a periodic square lattice has all four: common
// practice), as it does by default, and that --augment none augments
// nothing.
func TestTrainAugmentAuto(t *testing.T) {
	dir := t.TempDir()
	ds := filepath.Join(dir, "d.npz")
	if out, err := execTidemark(t, "simulate", "ising", "--size", "4", "--grid", "T=1.5:3:4", "--samples", "40", "--seed", "3", "--quiet", "-o", ds); err != nil {
		t.Fatalf("simulate: %v\n%s", err, out)
	}
	for _, tc := range []struct {
		args []string
		want []string
	}{
		{[]string{"--augment", "auto"}, []string{"translate", "mirror", "rotate", "flip"}},
		{nil, []string{"translate", "mirror", "rotate", "flip"}},
		{[]string{"--augment", "none"}, nil},
	} {
		ck := filepath.Join(dir, "m.ckpt")
		args := append([]string{"train", ds, "-o", ck, "--epochs", "1", "--hidden", "16", "--threads", "1", "--quiet", "--force"}, tc.args...)
		if out, err := execTidemark(t, args...); err != nil {
			t.Fatalf("%v: %v\n%s", args, err, out)
		}
		c, err := checkpoints.Load(ck)
		if err != nil {
			t.Fatal(err)
		}
		if got := c.Header.Training.Augment; !slices.Equal(got, tc.want) {
			t.Errorf("%v: trained with augmentation %v, want %v", tc.args, got, tc.want)
		}
	}
}
