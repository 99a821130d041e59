package data

import (
	"context"
	"errors"
	"fmt"
	"io"
)

// BlockRows is the number of snapshots EachBlock hands out at once when
// asked for rows ≤ 0: 8 MB of states at 1024 sites.
const BlockRows = 8192

// ReadHead reads a dataset file as Read does, except for its states: the
// dataset it returns has States nil, and EachBlock reads them from path,
// block by block, each time it is called. Everything else (shape,
// parameters, metadata) is read and validated here; the states' values are
// checked as EachBlock reads them, with Read's messages. A command that
// only ever reads the states in blocks so holds a few blocks in memory
// instead of the whole file.
func ReadHead(path string, opt ReadOptions) (*Dataset, error) {
	s, err := OpenStream(path, opt)
	if err != nil {
		return nil, err
	}
	ds := s.Head
	if err := s.Close(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	ds.file, ds.fileOpt = path, opt
	return ds, nil
}

// InFile reports that ds holds no states in memory and reads them from
// its file (ReadHead): only EachBlock may read them.
func (ds *Dataset) InFile() bool { return ds.States == nil && ds.file != "" }

// EachBlock calls fn with the dataset's snapshots in order, in consecutive
// blocks of at most rows whole snapshots (BlockRows when rows ≤ 0); first
// is the index of the block's first snapshot. In memory a block is a view
// of States. From a file (ReadHead) the next block is read and checked
// while fn works on the current one, and a buffer is reused once fn has
// returned, so fn must not keep xs. The first error, of fn, of the file
// (a *ValidationError, as Read reports it) or of ctx, ends the walk.
func (ds *Dataset) EachBlock(ctx context.Context, rows int, fn func(first int, xs []uint8) error) error {
	if rows <= 0 {
		rows = BlockRows
	}
	if !ds.InFile() {
		for lo := 0; lo < ds.M; lo += rows {
			if err := ctx.Err(); err != nil {
				return err
			}
			hi := min(lo+rows, ds.M)
			if err := fn(lo, ds.States[lo*ds.N:hi*ds.N]); err != nil {
				return err
			}
		}
		return nil
	}
	s, err := OpenStream(ds.file, ds.fileOpt)
	if err != nil {
		return err
	}
	defer s.Close()
	if s.Head.M != ds.M || s.Head.N != ds.N {
		return fmt.Errorf("%s: expected the %d×%d states read at the start, found %d×%d (the file changed while it was in use)", ds.file, ds.M, ds.N, s.Head.M, s.Head.N)
	}
	type filled struct {
		first int
		xs    []uint8
		err   error
	}
	const buffers = 2 // one read while fn works on the other
	free := make(chan []uint8, buffers)
	for range buffers {
		free <- make([]uint8, rows*ds.N)
	}
	full := make(chan filled)
	done := make(chan struct{})
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		defer close(full)
		for first := 0; ; {
			var buf []uint8
			select {
			case buf = <-free:
			case <-done:
				return
			}
			k, err := s.Next(buf)
			if errors.Is(err, io.EOF) {
				if first != ds.M {
					err = fmt.Errorf("%s: expected %d snapshots, the file ended after %d", ds.file, ds.M, first)
				} else {
					return
				}
			}
			select {
			case full <- filled{first, buf[:k*ds.N], err}:
			case <-done:
				return
			}
			if err != nil {
				return
			}
			first += k
		}
	}()
	defer func() {
		close(done)
		<-stopped
	}()
	for b := range full {
		if b.err != nil {
			return b.err
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		if err := fn(b.first, b.xs); err != nil {
			return err
		}
		free <- b.xs[:cap(b.xs)]
	}
	return nil
}

// Slots maps rows to the slots of groups: row m is slot i of group k when
// idx[k][i] = m. It lets a walk over blocks of rows (EachBlock) hand each
// run of rows to the group and slots they fill.
type Slots struct {
	group, slot []int32 // −1: the row is in no group
}

// NewSlots returns the slots of rows 0..m−1 in the groups idx (each row in
// at most one group).
func NewSlots(m int, idx [][]int) *Slots {
	s := &Slots{group: make([]int32, m), slot: make([]int32, m)}
	for i := range s.group {
		s.group[i] = -1
	}
	for k, ix := range idx {
		for i, r := range ix {
			s.group[r], s.slot[r] = int32(k), int32(i)
		}
	}
	return s
}

// Runs calls fn for every maximal run of the n rows from first on that
// fill consecutive slots of one group, at most most rows long (no limit
// when most ≤ 0): rows first+lo … first+lo+c−1 are slots i … i+c−1 of
// group k. Rows in no group are skipped. The first error of fn ends it.
func (s *Slots) Runs(first, n, most int, fn func(lo, c, k, i int) error) error {
	for lo := 0; lo < n; {
		k, i := s.group[first+lo], s.slot[first+lo]
		c := 1
		for lo+c < n && (most <= 0 || c < most) && s.group[first+lo+c] == k && s.slot[first+lo+c] == i+int32(c) {
			c++
		}
		if k >= 0 {
			if err := fn(lo, c, int(k), int(i)); err != nil {
				return err
			}
		}
		lo += c
	}
	return nil
}
