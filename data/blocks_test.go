package data

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// eachBlock collects what EachBlock hands out, checking that the blocks
// are consecutive and at most rows long.
func eachBlock(t *testing.T, ds *Dataset, rows int) ([]uint8, error) {
	t.Helper()
	var all []uint8
	next := 0
	err := ds.EachBlock(context.Background(), rows, func(first int, xs []uint8) error {
		k := len(xs) / ds.N
		if first != next || k < 1 || k > rows || len(xs) != k*ds.N {
			t.Fatalf("block at %d of %d values, expected one at %d of 1 to %d rows", first, len(xs), next, rows)
		}
		next += k
		all = append(all, xs...)
		return nil
	})
	return all, err
}

// A dataset read by ReadHead hands out, block by block, the states Read
// reads whole, and so does one in memory; the head is Read's.
func TestEachBlockMatchesRead(t *testing.T) {
	ds := randomDataset(t, 50, []int{3, 4}, 3) // 300 snapshots of 12 sites
	path := filepath.Join(t.TempDir(), "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	want, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	head, err := ReadHead(path, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !head.InFile() || want.InFile() || head.M != want.M || head.N != want.N || !slices.Equal(head.Params, want.Params) {
		t.Fatalf("head M=%d N=%d in file %v, Read's M=%d N=%d in file %v", head.M, head.N, head.InFile(), want.M, want.N, want.InFile())
	}
	for _, rows := range []int{1, 7, 64, 299, 300, 1000} {
		for _, d := range []*Dataset{head, want} {
			got, err := eachBlock(t, d, rows)
			if err != nil {
				t.Fatalf("rows %d: %v", rows, err)
			}
			if !bytes.Equal(got, want.States) {
				t.Errorf("rows %d, in file %v: states differ from Read's", rows, d.InFile())
			}
		}
	}
}

// Every damaged file gets Read's message, from ReadHead or from EachBlock.
func TestEachBlockRejectsAsRead(t *testing.T) {
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

// An error of fn ends the walk at once and is returned, in memory and from
// the file.
func TestEachBlockStopsAtError(t *testing.T) {
	ds := randomDataset(t, 20, []int{5}, 2)
	path := filepath.Join(t.TempDir(), "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	head, err := ReadHead(path, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	stop := errors.New("stop")
	for _, d := range []*Dataset{head, ds} {
		calls := 0
		err := d.EachBlock(context.Background(), 4, func(first int, xs []uint8) error {
			calls++
			if first >= 8 {
				return stop
			}
			return nil
		})
		if !errors.Is(err, stop) || calls != 3 {
			t.Errorf("in file %v: %d calls and %v, want 3 calls and the error of the third", d.InFile(), calls, err)
		}
	}
}
