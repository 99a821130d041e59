package safefile_test

import (
	"bytes"
	"errors"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/data/safefile/disktest"
)

// incompressible returns n random bytes.
func incompressible(n int, seed uint64) []byte {
	r := rand.New(rand.NewPCG(seed, 0))
	b := make([]byte, n)
	for i := range b {
		b[i] = byte(r.Uint32())
	}
	return b
}

// bigDataset returns a dataset of about 200 KB of random byte values, too
// large for a 64 KiB file system even after compression.
func bigDataset(t *testing.T) *data.Dataset {
	t.Helper()
	ds, err := data.New(800, 256, []string{"T"}, 256, []int{16, 16}, map[string]string{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	copy(ds.States, incompressible(len(ds.States), 1))
	for m := range ds.M {
		ds.Params[m] = float64(m % 2)
	}
	return ds
}

// smallDataset returns a valid dataset of a few hundred bytes.
func smallDataset(t *testing.T) *data.Dataset {
	t.Helper()
	ds, err := data.New(4, 3, []string{"T"}, 2, nil, map[string]string{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	copy(ds.States, []uint8{0, 1, 0, 1, 1, 1, 0, 0, 0, 1, 0, 0})
	copy(ds.Params, []float64{1, 1, 2, 2})
	return ds
}

// TestWriteFullDisk writes more than a 64 KiB tmpfs holds, replacing an
// earlier file and creating a new one: both fail naming the path and
// "no space left on device", the earlier file keeps its bytes and no
// temporary file is left.
func TestWriteFullDisk(t *testing.T) {
	dir := disktest.Small(t)
	old := filepath.Join(dir, "old.bin")
	earlier := []byte("earlier content\n")
	if err := safefile.WriteBytes(old, false, earlier); err != nil {
		t.Fatal(err)
	}
	big := incompressible(200<<10, 2)
	for _, c := range []struct {
		name  string
		path  string
		force bool
	}{{"replace", old, true}, {"new", filepath.Join(dir, "new.bin"), false}} {
		t.Run(c.name, func(t *testing.T) {
			err := safefile.WriteBytes(c.path, c.force, big)
			if !errors.Is(err, syscall.ENOSPC) || !strings.HasPrefix(err.Error(), c.path+": ") || !strings.Contains(err.Error(), "no space left on device") {
				t.Fatalf("error %v, want one naming %s and ENOSPC", err, c.path)
			}
			t.Log(err)
			if b, err := os.ReadFile(old); err != nil || !bytes.Equal(b, earlier) {
				t.Fatalf("earlier file now %q (%v), want %q", b, err, earlier)
			}
			disktest.OnlyFiles(t, dir, "old.bin")
		})
	}
}

// TestDatasetWriteFullDisk does the same through ds.Write, and checks that
// the earlier dataset still reads back whole.
func TestDatasetWriteFullDisk(t *testing.T) {
	dir := disktest.Small(t)
	path := filepath.Join(dir, "snap.npz")
	small := smallDataset(t)
	if err := small.Write(path, false); err != nil {
		t.Fatal(err)
	}
	err := bigDataset(t).Write(path, true)
	if !errors.Is(err, syscall.ENOSPC) || !strings.HasPrefix(err.Error(), path+": ") {
		t.Fatalf("error %v, want one naming %s and ENOSPC", err, path)
	}
	t.Log(err)
	back, err := data.Read(path)
	if err != nil {
		t.Fatalf("earlier dataset no longer reads: %v", err)
	}
	if !bytes.Equal(back.States, small.States) || back.M != small.M {
		t.Fatalf("earlier dataset changed: %d snapshots %v", back.M, back.States)
	}
	disktest.OnlyFiles(t, dir, "snap.npz")
}

// TestWriteReadOnly writes into a read-only folder, replacing an earlier
// file and creating a new one, directly and through ds.Write: every write
// fails naming the path and the reason, and the earlier file is intact.
func TestWriteReadOnly(t *testing.T) {
	dir, freeze := disktest.ReadOnly(t)
	path := filepath.Join(dir, "snap.npz")
	small := smallDataset(t)
	if err := small.Write(path, false); err != nil {
		t.Fatal(err)
	}
	earlier, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	freeze()
	for _, c := range []struct {
		name  string
		write func() error
		path  string
	}{
		{"WriteBytes replace", func() error { return safefile.WriteBytes(path, true, []byte("new")) }, path},
		{"WriteBytes new", func() error { return safefile.WriteBytes(filepath.Join(dir, "n.bin"), false, []byte("new")) }, filepath.Join(dir, "n.bin")},
		{"ds.Write replace", func() error { return smallDataset(t).Write(path, true) }, path},
		{"ds.Write new", func() error { return smallDataset(t).Write(filepath.Join(dir, "n.npz"), false) }, filepath.Join(dir, "n.npz")},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := c.write()
			if err == nil {
				t.Fatal("write into a read-only folder succeeded")
			}
			if !strings.HasPrefix(err.Error(), c.path+": ") || !(errors.Is(err, syscall.EROFS) || errors.Is(err, syscall.EACCES)) {
				t.Fatalf("error %v, want one naming %s and EROFS or EACCES", err, c.path)
			}
			t.Log(err)
			if b, err := os.ReadFile(path); err != nil || !bytes.Equal(b, earlier) {
				t.Fatalf("earlier file changed (%v)", err)
			}
			disktest.OnlyFiles(t, dir, "snap.npz")
		})
	}
}
