package data

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// readStream reads every row of the dataset file path through a Stream in
// blocks of block rows and returns the head and the states.
func readStream(t *testing.T, path string, opt ReadOptions, block int) (*Dataset, []uint8, error) {
	t.Helper()
	s, err := OpenStream(path, opt)
	if err != nil {
		return nil, nil, err
	}
	defer s.Close()
	buf := make([]uint8, block*s.Head.N)
	var all []uint8
	for {
		k, err := s.Next(buf)
		if errors.Is(err, io.EOF) {
			return s.Head, all, nil
		}
		if err != nil {
			return s.Head, all, err
		}
		if k < 1 || k > block {
			t.Fatalf("Next read %d rows into room for %d", k, block)
		}
		all = append(all, buf[:k*s.Head.N]...)
	}
}

func TestStreamMatchesRead(t *testing.T) {
	dir := t.TempDir()
	ds := randomDataset(t, 50, []int{3, 4}, 3) // 300 snapshots of 12 sites
	path := filepath.Join(dir, "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	want, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, block := range []int{1, 7, 64, 299, 300, 1000} {
		head, states, err := readStream(t, path, ReadOptions{}, block)
		if err != nil {
			t.Fatalf("block %d: %v", block, err)
		}
		if !bytes.Equal(states, want.States) {
			t.Errorf("block %d: states differ from Read's", block)
		}
		if head.M != want.M || head.N != want.N || head.D != want.D || !slices.Equal(head.Params, want.Params) || head.States != nil {
			t.Errorf("block %d: head M=%d N=%d D=%d, want %d %d %d and Read's params, no states", block, head.M, head.N, head.D, want.M, want.N, want.D)
		}
	}
}

// Every damaged file gets from a stream read to its end the message Read
// gives it, whatever the block size, and so from ReadHead and EachBlock.
func TestStreamRejectsAsRead(t *testing.T) {
	dir := t.TempDir()
	for _, c := range rejectCases(t) {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(dir, "bad.npz")
			if err := os.WriteFile(path, c.file, 0o644); err != nil {
				t.Fatal(err)
			}
			_, rerr := Read(path)
			if rerr == nil {
				t.Fatal("Read accepted it")
			}
			for _, block := range []int{1, 3} {
				_, _, err := readStream(t, path, ReadOptions{}, block)
				if err == nil || err.Error() != rerr.Error() {
					t.Errorf("block %d: stream says %v, Read %q", block, err, rerr)
				}
			}
			// ReadHead, or EachBlock after it, says what Read says.
			head, err := ReadHead(path, ReadOptions{})
			if err == nil {
				_, err = eachBlock(t, head, 3)
			}
			if err == nil || err.Error() != rerr.Error() {
				t.Errorf("ReadHead and EachBlock say %v, Read %q", err, rerr)
			}
		})
	}
}

func TestStreamUnlabelled(t *testing.T) {
	ds := randomDataset(t, 10, []int{6}, 2)
	ds.D, ds.Params, ds.Meta.ParamNames = 0, nil, nil
	path := filepath.Join(t.TempDir(), "u.npz")
	b, err := ds.Bytes()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, _, err := readStream(t, path, ReadOptions{}, 4); err == nil {
		t.Error("a labelled stream accepted a file without params")
	}
	head, states, err := readStream(t, path, ReadOptions{Unlabelled: true}, 4)
	if err != nil {
		t.Fatal(err)
	}
	if head.D != 0 || !bytes.Equal(states, ds.States) {
		t.Errorf("D = %d, states equal: %v", head.D, bytes.Equal(states, ds.States))
	}
}
