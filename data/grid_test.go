package data

import (
	"fmt"
	"reflect"
	"testing"
)

// labelled returns a dataset with the given parameter rows (and zero states).
func labelled(t *testing.T, names []string, rows [][]float64) *Dataset {
	t.Helper()
	ds, err := New(len(rows), 2, names, 2, nil, map[string]string{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range rows {
		copy(ds.ParamRow(i), r)
	}
	return ds
}

func TestGrid(t *testing.T) {
	cases := []struct {
		name    string
		names   []string
		rows    [][]float64
		points  [][]float64
		axes    [][]float64
		product bool
		index   [][]int
	}{
		{
			name: "1-D", names: []string{"T"},
			rows:   [][]float64{{2}, {1}, {3}, {1}, {2}, {3}},
			points: [][]float64{{1}, {2}, {3}}, axes: [][]float64{{1, 2, 3}}, product: true,
			index: [][]int{{1, 3}, {0, 4}, {2, 5}},
		},
		{
			name: "2-D product", names: []string{"T", "h"},
			rows:   [][]float64{{2, 0.5}, {1, 0}, {2, 0}, {1, 0.5}, {1, 0}, {2, 0.5}, {2, 0}, {1, 0.5}},
			points: [][]float64{{1, 0}, {1, 0.5}, {2, 0}, {2, 0.5}}, axes: [][]float64{{1, 2}, {0, 0.5}}, product: true,
			index: [][]int{{1, 4}, {3, 7}, {2, 6}, {0, 5}},
		},
		{
			name: "2-D scattered", names: []string{"T", "h"},
			rows:   [][]float64{{1, 0}, {2, 1}, {3, 0}, {1, 0}, {2, 1}, {3, 0}},
			points: [][]float64{{1, 0}, {2, 1}, {3, 0}}, axes: [][]float64{{1, 2, 3}, {0, 1}}, product: false,
			index: [][]int{{0, 3}, {1, 4}, {2, 5}},
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ds := labelled(t, c.names, c.rows)
			g := NewGrid(ds)
			if !reflect.DeepEqual(g.Points, c.points) || !reflect.DeepEqual(g.Axes, c.axes) || g.Product != c.product || !reflect.DeepEqual(g.Index, c.index) {
				t.Fatalf("got points %v axes %v product %v index %v", g.Points, g.Axes, g.Product, g.Index)
			}
			if g.K() != len(c.points) || g.Dim() != len(c.names) {
				t.Fatalf("K=%d Dim=%d", g.K(), g.Dim())
			}
			for k, idx := range g.Index {
				for _, m := range idx {
					if g.PointOf[m] != k {
						t.Fatalf("PointOf[%d] = %d, want %d", m, g.PointOf[m], k)
					}
				}
			}
			for k, p := range g.Points {
				if g.Find(p) != k {
					t.Fatalf("Find(%v) = %d, want %d", p, g.Find(p), k)
				}
			}
			if g.Find([]float64{9, 9}[:len(c.names)]) != -1 {
				t.Fatal("Find of an absent point is not -1")
			}
		})
	}
}

func TestAxisIndexPointIndex(t *testing.T) {
	var rows [][]float64
	for _, T := range []float64{3, 1, 2} {
		for _, h := range []float64{0, 0.5} {
			rows = append(rows, []float64{T, h}, []float64{T, h})
		}
	}
	g := NewGrid(labelled(t, []string{"T", "h"}, rows))
	if !g.Product || !reflect.DeepEqual(g.Shape(), []int{3, 2}) {
		t.Fatalf("product %v shape %v", g.Product, g.Shape())
	}
	for k := 0; k < g.K(); k++ {
		idx := g.AxisIndex(k)
		// The last axis varies fastest.
		if want := []int{k / 2, k % 2}; !reflect.DeepEqual(idx, want) {
			t.Fatalf("AxisIndex(%d) = %v, want %v", k, idx, want)
		}
		if g.PointIndex(idx) != k {
			t.Fatalf("PointIndex(%v) = %d, want %d", idx, g.PointIndex(idx), k)
		}
		for a, i := range idx {
			if g.Axes[a][i] != g.Points[k][a] {
				t.Fatalf("point %d axis %d: %v vs %v", k, a, g.Axes[a][i], g.Points[k][a])
			}
		}
	}
}

func TestGridUnlabelled(t *testing.T) {
	ds, _ := New(4, 2, nil, 2, nil, nil)
	if g := NewGrid(ds); g.K() != 0 || g.PointOf != nil {
		t.Fatalf("unlabelled grid has %d points", g.K())
	}
}

func TestFormatPoint(t *testing.T) {
	cases := []struct {
		names []string
		p     []float64
		want  string
	}{
		{[]string{"T"}, []float64{2.2691853}, "T=2.26919"},
		{[]string{"T", "h"}, []float64{2, 0.5}, "T=2, h=0.5"},
		{nil, []float64{1e-7}, "λ0=1e-07"},
	}
	for _, c := range cases {
		if got := FormatPoint(c.names, c.p); got != c.want {
			t.Errorf("FormatPoint(%v, %v) = %q, want %q", c.names, c.p, got, c.want)
		}
	}
}

func ExampleNewGrid() {
	// Eight snapshots, two at each of two temperatures × two fields.
	ds, _ := New(8, 4, []string{"T", "h"}, 2, []int{2, 2}, map[string]string{"generator": "example"})
	copy(ds.Params, []float64{2, 0, 1, 0, 2, 1, 1, 1, 1, 0, 2, 0, 1, 1, 2, 1})
	g := NewGrid(ds)
	fmt.Println("points:", g.K(), "product:", g.Product, "shape:", g.Shape())
	for k := range g.Points {
		fmt.Printf("%d %s axes %v samples %v\n", k, g.Label(k), g.AxisIndex(k), g.Index[k])
	}
	// Output:
	// points: 4 product: true shape: [2 2]
	// 0 T=1, h=0 axes [0 0] samples [1 4]
	// 1 T=1, h=1 axes [0 1] samples [3 6]
	// 2 T=2, h=0 axes [1 0] samples [0 5]
	// 3 T=2, h=1 axes [1 1] samples [2 7]
}

// TestNeighbourPairs lists the neighbouring points of a 2×3 product grid
// (2·2 pairs along the second axis, 3 along the first), of an L-shaped
// grid and of a single point.
func TestNeighbourPairs(t *testing.T) {
	for _, tc := range []struct {
		name   string
		points [][]float64
		want   int
	}{
		{"1-D", [][]float64{{1}, {2}, {3}}, 2},
		{"2×3 product", [][]float64{{0, 1}, {0, 2}, {0, 3}, {1, 1}, {1, 2}, {1, 3}}, 7},
		{"L-shaped", [][]float64{{0, 1}, {0, 2}, {1, 1}}, 2},
		{"one point", [][]float64{{1}}, 0},
	} {
		d := len(tc.points[0])
		ds, err := New(len(tc.points), 1, []string{"a", "b"}[:d], 2, nil, map[string]any{"generator": "test"})
		if err != nil {
			t.Fatal(err)
		}
		for i, p := range tc.points {
			copy(ds.Params[i*d:], p)
		}
		if got := len(NewGrid(ds).NeighbourPairs()); got != tc.want {
			t.Errorf("%s: %d pairs, want %d", tc.name, got, tc.want)
		}
	}
}
