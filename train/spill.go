package train

import (
	"fmt"
	"io"
	"os"
	"unsafe"
)

// spillValues is the number of weights above which the state kept before
// every epoch (for a non-finite loss or an interruption) goes to a
// temporary file instead of memory: at 4096 sites the weights, both Adam
// moments and the moving average are 18.6 M values each, and three
// in-memory copies of them cost 450 MB for the whole run. Below it the
// copy is cheaper than the file. The file is made in os.TempDir (TMPDIR);
// where that is a tmpfs, the copy stays in memory after all, only outside
// the process's heap.
var spillValues = 4 << 20 // a variable so that tests can send small models to the file

// spill is the saved state of the arrays in a temporary file, read back by
// load in the same order.
type spill struct {
	f *os.File
}

// bytesOf views x as its bytes (native byte order; the file is read back
// only by this process).
func bytesOf(x []float64) []byte {
	if len(x) == 0 {
		return nil
	}
	return unsafe.Slice((*byte)(unsafe.Pointer(&x[0])), 8*len(x))
}

// newSpill writes the arrays of groups to a new temporary file.
func newSpill(groups ...[][]float64) (*spill, error) {
	f, err := os.CreateTemp("", "tidemark-train-*.state")
	if err != nil {
		return nil, err
	}
	os.Remove(f.Name()) // unlinked: the file goes when it is closed, or the process ends
	for _, g := range groups {
		for _, x := range g {
			if _, err := f.Write(bytesOf(x)); err != nil {
				f.Close()
				return nil, fmt.Errorf("saving the state before the epoch: %w", err)
			}
		}
	}
	return &spill{f: f}, nil
}

// load reads the arrays back into groups, which must have the shapes
// newSpill was given.
func (s *spill) load(groups ...[][]float64) error {
	if _, err := s.f.Seek(0, io.SeekStart); err != nil {
		return err
	}
	for _, g := range groups {
		for _, x := range g {
			if _, err := io.ReadFull(s.f, bytesOf(x)); err != nil {
				return fmt.Errorf("restoring the state before the epoch: %w", err)
			}
		}
	}
	return nil
}

// close removes the file.
func (s *spill) close() {
	if s != nil {
		s.f.Close()
	}
}
