package data

import (
	"fmt"
	"slices"
	"sort"
	"strconv"
	"strings"
)

// Grid is the set of distinct parameter points of a dataset, sorted
// lexicographically, with the samples that belong to each.
type Grid struct {
	// Names are the parameter names, one per axis.
	Names []string
	// Points holds the K distinct parameter rows in lexicographic order.
	Points [][]float64
	// Axes holds, per axis, the distinct values that occur, ascending.
	Axes [][]float64
	// Product is true when Points is exactly the Cartesian product of Axes.
	// Then point k has axis indices given by AxisIndex(k), the last axis
	// varying fastest.
	Product bool
	// Index lists the sample indices of each point, ascending.
	Index [][]int
	// PointOf gives the grid point of each sample.
	PointOf []int
}

// NewGrid derives the grid of ds. It returns an empty grid for an
// unlabelled dataset.
func NewGrid(ds *Dataset) *Grid {
	g := &Grid{Names: append([]string(nil), ds.Meta.ParamNames...)}
	if ds.D == 0 || len(ds.Params) < ds.M*ds.D {
		return g
	}
	d := ds.D
	order := make([]int, ds.M)
	for i := range order {
		order[i] = i
	}
	less := func(a, b int) int {
		pa, pb := ds.Params[a*d:(a+1)*d], ds.Params[b*d:(b+1)*d]
		for i := range pa {
			if pa[i] < pb[i] {
				return -1
			}
			if pa[i] > pb[i] {
				return 1
			}
		}
		return 0
	}
	// An unstable sort with the sample index as tie-break gives the stable
	// order; it is several times faster than sort.SliceStable here.
	slices.SortFunc(order, func(a, b int) int {
		if c := less(a, b); c != 0 {
			return c
		}
		return a - b
	})
	g.PointOf = make([]int, ds.M)
	for i, m := range order {
		if i == 0 || less(order[i-1], m) != 0 {
			g.Points = append(g.Points, append([]float64(nil), ds.ParamRow(m)...))
			g.Index = append(g.Index, nil)
		}
		k := len(g.Points) - 1
		g.Index[k] = append(g.Index[k], m)
		g.PointOf[m] = k
	}
	g.Axes = make([][]float64, d)
	for a := 0; a < d; a++ {
		seen := map[float64]bool{}
		for _, p := range g.Points {
			if !seen[p[a]] {
				seen[p[a]] = true
				g.Axes[a] = append(g.Axes[a], p[a])
			}
		}
		sort.Float64s(g.Axes[a])
	}
	n := 1
	for _, ax := range g.Axes {
		n *= len(ax)
	}
	g.Product = n == len(g.Points)
	return g
}

// K returns the number of grid points.
func (g *Grid) K() int { return len(g.Points) }

// Dim returns the number of axes.
func (g *Grid) Dim() int { return len(g.Names) }

// Shape returns the number of values on each axis.
func (g *Grid) Shape() []int {
	s := make([]int, len(g.Axes))
	for i, a := range g.Axes {
		s[i] = len(a)
	}
	return s
}

// AxisIndex returns the per-axis indices of point k on a product grid.
func (g *Grid) AxisIndex(k int) []int {
	s := g.Shape()
	idx := make([]int, len(s))
	for a := len(s) - 1; a >= 0; a-- {
		idx[a] = k % s[a]
		k /= s[a]
	}
	return idx
}

// PointIndex returns the point with per-axis indices idx on a product grid.
func (g *Grid) PointIndex(idx []int) int {
	s := g.Shape()
	k := 0
	for a := range s {
		k = k*s[a] + idx[a]
	}
	return k
}

// Find returns the index of the point equal to p, or −1.
func (g *Grid) Find(p []float64) int {
	i := sort.Search(len(g.Points), func(i int) bool { return cmpRows(g.Points[i], p) >= 0 })
	if i < len(g.Points) && cmpRows(g.Points[i], p) == 0 {
		return i
	}
	return -1
}

func cmpRows(a, b []float64) int {
	for i := range a {
		if a[i] < b[i] {
			return -1
		}
		if a[i] > b[i] {
			return 1
		}
	}
	return 0
}

// Label formats point k as "T=2.25" or "T=2, h=0.5".
func (g *Grid) Label(k int) string { return FormatPoint(g.Names, g.Points[k]) }

// FormatPoint formats a parameter point with its names.
func FormatPoint(names []string, p []float64) string {
	parts := make([]string, len(p))
	for i, v := range p {
		n := "λ" + strconv.Itoa(i)
		if i < len(names) {
			n = names[i]
		}
		parts[i] = fmt.Sprintf("%s=%s", n, strconv.FormatFloat(v, 'g', 6, 64))
	}
	return strings.Join(parts, ", ")
}

// NeighbourPairs lists the pairs (a, b) of grid points that differ in one
// axis only, b holding the next larger value of that axis that occurs with
// a's other values.
func (g *Grid) NeighbourPairs() [][2]int {
	var out [][2]int
	D := len(g.Names)
	for ax := 0; ax < D; ax++ {
		for a, pa := range g.Points {
			best := -1
			for b, pb := range g.Points {
				if pb[ax] <= pa[ax] {
					continue
				}
				same := true
				for d := 0; d < D; d++ {
					if d != ax && pb[d] != pa[d] {
						same = false
						break
					}
				}
				if same && (best < 0 || pb[ax] < g.Points[best][ax]) {
					best = b
				}
			}
			if best >= 0 {
				out = append(out, [2]int{a, best})
			}
		}
	}
	return out
}
