package checkpoints_test

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"

	"tidemark/checkpoints"
	"tidemark/data/safefile/disktest"
	"tidemark/model"
)

// bigCheckpoint returns a real checkpoint of a 16×16-site model, several
// hundred kilobytes, too large for a 64 KiB file system.
func bigCheckpoint(t *testing.T) *checkpoints.Checkpoint {
	t.Helper()
	c := smallCheckpoint(t, true)
	cfg := model.DefaultConfig(256, 2, 1, []float64{1}, []float64{3})
	cfg.Hidden = []int{64}
	cfg.CondHidden = []int{8}
	m, err := model.New(cfg, 5)
	if err != nil {
		t.Fatal(err)
	}
	c.Header.Model = cfg
	c.Header.Lattice = []int{16, 16}
	c.Best = m.Weights
	c.Last, c.AdamM, c.AdamV = clones(m.Weights), clones(m.Weights), clones(m.Weights)
	return c
}

func clones(ts []model.Tensor) []model.Tensor {
	out := make([]model.Tensor, len(ts))
	for i, t := range ts {
		out[i] = model.Tensor{Name: t.Name, Shape: slices.Clone(t.Shape), Data: slices.Clone(t.Data)}
	}
	return out
}

// TestSaveFullDisk saves a checkpoint larger than a 64 KiB tmpfs over an
// earlier one and as a new file: both fail naming the path and "no space
// left on device", the earlier checkpoint still loads with its bytes, and
// no temporary file is left.
func TestSaveFullDisk(t *testing.T) {
	dir := disktest.Small(t)
	path := filepath.Join(dir, "model.ckpt")
	if err := smallCheckpoint(t, true).Save(path, false); err != nil {
		t.Fatal(err)
	}
	earlier, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	big := bigCheckpoint(t)
	if b, err := big.Bytes(); err != nil || len(b) < 128<<10 {
		t.Fatalf("big checkpoint of %d bytes (%v), want over 128 KiB", len(b), err)
	}
	for _, c := range []struct {
		name  string
		path  string
		force bool
	}{{"replace", path, true}, {"new", filepath.Join(dir, "new.ckpt"), false}} {
		t.Run(c.name, func(t *testing.T) {
			err := big.Save(c.path, c.force)
			if !errors.Is(err, syscall.ENOSPC) || !strings.HasPrefix(err.Error(), c.path+": ") || !strings.Contains(err.Error(), "no space left on device") {
				t.Fatalf("error %v, want one naming %s and ENOSPC", err, c.path)
			}
			t.Log(err)
			if b, err := os.ReadFile(path); err != nil || !bytes.Equal(b, earlier) {
				t.Fatalf("earlier checkpoint changed (%v)", err)
			}
			if _, err := checkpoints.Load(path); err != nil {
				t.Fatalf("earlier checkpoint no longer loads: %v", err)
			}
			disktest.OnlyFiles(t, dir, "model.ckpt")
		})
	}
}

// TestSaveReadOnly saves over an earlier checkpoint and as a new file in a
// read-only folder (as root a tmpfs remounted read-only, since root writes
// through permission bits; otherwise chmod 0555): both fail naming the path
// and the reason, and the earlier checkpoint is intact.
func TestSaveReadOnly(t *testing.T) {
	dir, freeze := disktest.ReadOnly(t)
	path := filepath.Join(dir, "model.ckpt")
	c := smallCheckpoint(t, true)
	if err := c.Save(path, false); err != nil {
		t.Fatal(err)
	}
	earlier, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	freeze()
	for _, tc := range []struct {
		name  string
		path  string
		force bool
	}{{"replace", path, true}, {"new", filepath.Join(dir, "new.ckpt"), false}} {
		t.Run(tc.name, func(t *testing.T) {
			err := c.Save(tc.path, tc.force)
			if err == nil {
				t.Fatal("Save into a read-only folder succeeded")
			}
			if !strings.HasPrefix(err.Error(), tc.path+": ") || !(errors.Is(err, syscall.EROFS) || errors.Is(err, syscall.EACCES)) {
				t.Fatalf("error %v, want one naming %s and EROFS or EACCES", err, tc.path)
			}
			t.Log(err)
			if b, err := os.ReadFile(path); err != nil || !bytes.Equal(b, earlier) {
				t.Fatalf("earlier checkpoint changed (%v)", err)
			}
			disktest.OnlyFiles(t, dir, "model.ckpt")
		})
	}
}
