package data

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"
)

// TestDescribe writes a dataset of 3 temperatures with 2, 3 and 5 snapshots
// and checks what Describe reports and prints: the median of 2, 3, 5 is 3.
func TestDescribe(t *testing.T) {
	ds, err := New(10, 4, []string{"T"}, 2, []int{2, 2}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	copy(ds.Params, []float64{1, 1, 2, 2, 2, 3, 3, 3, 3, 3})
	path := filepath.Join(t.TempDir(), "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	r, err := Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	if r.Samples != 10 || r.Sites != 4 || r.Grid.Points != 3 || r.SamplesPerPoint.Min != 2 || r.SamplesPerPoint.Median != 3 || r.SamplesPerPoint.Max != 5 || r.Generator != "test" {
		t.Errorf("description %+v, grid %+v, counts %+v", r, r.Grid, r.SamplesPerPoint)
	}
	var b bytes.Buffer
	if err := r.WriteText(&b); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"samples per point  min 2, median 3, max 5", "lattice 2x2", "T from 1 to 3, 3 values"} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("text lacks %q:\n%s", want, b.String())
		}
	}
}

func TestHumanBytesAndFormatLattice(t *testing.T) {
	for n, want := range map[int64]string{999: "999 B", 1000: "1.0 kB", 51_200_000: "51.2 MB"} {
		if got := HumanBytes(n); got != want {
			t.Errorf("HumanBytes(%d) = %q, want %q", n, got, want)
		}
	}
	if got := FormatLattice([]int{16, 8}); got != "16x8" {
		t.Errorf("FormatLattice = %q", got)
	}
}

func TestParseLattice(t *testing.T) {
	for _, tc := range []struct {
		s    string
		want string
		ok   bool
	}{{"16x16", "16x16", true}, {"4,6", "4x6", true}, {"8×2", "8x2", true}, {"256", "256", true}, {"", "", false}, {"4x0", "", false}, {"4xa", "", false}} {
		got, err := ParseLattice(tc.s)
		if (err == nil) != tc.ok || (tc.ok && FormatLattice(got) != tc.want) {
			t.Errorf("ParseLattice(%q) = %v, %v; want %s", tc.s, got, err, tc.want)
		}
	}
}
