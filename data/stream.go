package data

import (
	"errors"
	"io"
	"os"
)

// Stream reads the snapshots of a dataset file block by block, so that a
// command can go through a file whose states do not fit in memory at once.
// Everything but the states' values is read and validated when the stream
// is opened, as Read validates it; the values are checked as they are
// read, with the messages Read gives, and the archive's CRC-32 when the
// last row has been read.
type Stream struct {
	// Head holds the dataset's M, N, D, Params and Meta; its States is nil.
	Head *Dataset

	name string
	f    *os.File
	a    *archive
	row  int // rows read so far
	err  error
}

// OpenStream opens the dataset file path for reading its states in blocks
// (Stream.Next). It reports the problems Read reports, except those of the
// states' values and of the data past the header, which Next reports. The
// caller must Close the stream.
func OpenStream(path string, opt ReadOptions) (s *Stream, err error) {
	f, size, err := openDataset(path)
	if err != nil {
		return nil, err
	}
	defer func() {
		if err != nil {
			f.Close()
		}
	}()
	defer recoverCorrupt(path, &err)
	a, err := openArchive(f, size, path, opt)
	if err != nil {
		return nil, err
	}
	if err := a.readParams(path); err != nil {
		a.close()
		return nil, err
	}
	if err := a.ds.check(path, !opt.Unlabelled, false); err != nil {
		a.close()
		return nil, err
	}
	return &Stream{Head: a.ds, name: path, f: f, a: a}, nil
}

// Next reads the next snapshots into dst, as many whole rows of N sites as
// fit (at least one), and returns how many it read. After the last row it
// returns 0 and io.EOF, once the archive's end and checksum are verified;
// any other error is a *ValidationError and ends the stream.
func (s *Stream) Next(dst []uint8) (int, error) {
	if s.err != nil {
		return 0, s.err
	}
	n := s.Head.N
	rows := min(len(dst)/n, s.Head.M-s.row)
	if len(dst) < n {
		return 0, errors.New("data: Stream.Next needs room for at least one snapshot")
	}
	fail := func(err error) (int, error) {
		s.err = &ValidationError{File: s.name, Where: "states", Expected: err.Error(), Found: describe(s.a.states.h)}
		return 0, s.err
	}
	if rows == 0 {
		if err := s.a.states.end(); err != nil {
			return fail(err)
		}
		s.err = io.EOF
		return 0, io.EOF
	}
	xs := dst[:rows*n]
	if err := s.a.states.readFull(xs); err != nil {
		return fail(err)
	}
	if err := checkValues(s.name, xs, s.row, n, s.Head.Meta.Alphabet); err != nil {
		s.err = err
		return 0, err
	}
	s.row += rows
	return rows, nil
}

// Close closes the file.
func (s *Stream) Close() error {
	s.a.close()
	return s.f.Close()
}
