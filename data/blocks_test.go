package data

import (
	"bytes"
	"context"
	"errors"
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

// Runs hands out the rows of a block grouped by group and consecutive
// slots, split at the length limit, skipping rows in no group.
func TestSlotsRuns(t *testing.T) {
	// Rows 0..9: group 0 holds rows 1,2,3,7 (slots 0..3), group 1 rows 4,5,9.
	s := NewSlots(10, [][]int{{1, 2, 3, 7}, {4, 5, 9}})
	for _, tc := range []struct {
		first, n, most int
		want           [][4]int // lo, c, k, i
	}{
		{0, 10, 0, [][4]int{{1, 3, 0, 0}, {4, 2, 1, 0}, {7, 1, 0, 3}, {9, 1, 1, 2}}},
		{0, 10, 2, [][4]int{{1, 2, 0, 0}, {3, 1, 0, 2}, {4, 2, 1, 0}, {7, 1, 0, 3}, {9, 1, 1, 2}}},
		{2, 3, 0, [][4]int{{0, 2, 0, 1}, {2, 1, 1, 0}}},
	} {
		var got [][4]int
		s.Runs(tc.first, tc.n, tc.most, func(lo, c, k, i int) error {
			got = append(got, [4]int{lo, c, k, i})
			return nil
		})
		if !slices.Equal(got, tc.want) {
			t.Errorf("first %d n %d most %d: runs %v, want %v", tc.first, tc.n, tc.most, got, tc.want)
		}
	}
}
