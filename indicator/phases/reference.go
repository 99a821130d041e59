package phases

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// Curve is a reference line to draw beside the estimated boundaries.
type Curve struct {
	// Name says where the line comes from.
	Name string `json:"name"`
	// Points are (axis 0, axis 1) pairs in order along the line.
	Points [][2]float64 `json:"points"`
}

// ReadReference reads reference curves from a CSV text: one point per row,
// "x,y" or "x,y,name", x on the dataset's first parameter and y on its
// second. A blank row, or a change of name, starts a new polyline; rows
// starting with # are comments. An optional first row naming the two
// parameters ("T,Jy") is checked against names, and a row naming them in
// the other order swaps the columns. source names the file in errors.
func ReadReference(r io.Reader, names []string, source string) ([]Curve, error) {
	if len(names) != 2 {
		return nil, fmt.Errorf("%s: reference curves are for 2-D scans, the grid has %d parameters", source, len(names))
	}
	sc := bufio.NewScanner(r)
	var out []Curve
	var cur *Curve
	swap := false
	line := 0
	seenData := false
	flush := func() {
		if cur != nil && len(cur.Points) > 0 {
			out = append(out, *cur)
		}
		cur = nil
	}
	for sc.Scan() {
		line++
		t := strings.TrimSpace(sc.Text())
		if strings.HasPrefix(t, "#") {
			continue
		}
		if t == "" {
			flush()
			continue
		}
		f := strings.Split(t, ",")
		for i := range f {
			f[i] = strings.TrimSpace(f[i])
		}
		if len(f) < 2 || len(f) > 3 {
			return nil, fmt.Errorf("%s:%d: expected \"x,y\" or \"x,y,name\", found %d fields in %q", source, line, len(f), t)
		}
		x, ex := strconv.ParseFloat(f[0], 64)
		y, ey := strconv.ParseFloat(f[1], 64)
		if ex != nil || ey != nil {
			if !seenData && out == nil && cur == nil {
				switch {
				case f[0] == names[0] && f[1] == names[1]:
					continue
				case f[0] == names[1] && f[1] == names[0]:
					swap = true
					continue
				default:
					if ex != nil && ey != nil {
						return nil, fmt.Errorf("%s:%d: header %q names parameters %s,%s, the dataset has %s,%s", source, line, t, f[0], f[1], names[0], names[1])
					}
				}
			}
			return nil, fmt.Errorf("%s:%d: expected two numbers, found %q", source, line, t)
		}
		if math.IsNaN(x) || math.IsInf(x, 0) || math.IsNaN(y) || math.IsInf(y, 0) {
			return nil, fmt.Errorf("%s:%d: expected finite numbers, found %q", source, line, t)
		}
		seenData = true
		name := source
		if len(f) == 3 && f[2] != "" {
			name = f[2]
		}
		if cur != nil && cur.Name != name {
			flush()
		}
		if cur == nil {
			cur = &Curve{Name: name}
		}
		if swap {
			x, y = y, x
		}
		cur.Points = append(cur.Points, [2]float64{x, y})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", source, err)
	}
	flush()
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: expected at least one row \"x,y\", found none", source)
	}
	return out, nil
}

// Contour returns the zero lines of f over the rectangle [x0lo, x0hi] ×
// [x1lo, x1hi], traced on an n×n mesh of cells (marching squares, with the
// crossing on each cell edge placed by linear interpolation) and joined
// into polylines. Non-finite values of f cut the line.
func Contour(f func(x0, x1 float64) float64, x0lo, x0hi, x1lo, x1hi float64, n int, name string) []Curve {
	if n < 2 {
		n = 2
	}
	X := func(i int) float64 { return x0lo + (x0hi-x0lo)*float64(i)/float64(n) }
	Y := func(j int) float64 { return x1lo + (x1hi-x1lo)*float64(j)/float64(n) }
	v := make([][]float64, n+1)
	for i := range v {
		v[i] = make([]float64, n+1)
		for j := range v[i] {
			v[i][j] = f(X(i), Y(j))
		}
	}
	ok := func(a float64) bool { return !math.IsNaN(a) && !math.IsInf(a, 0) }
	// Crossing points are keyed by their edge so that segments of
	// neighbouring cells share endpoints.
	type edge struct{ i, j, dir int } // dir 0: (i,j)-(i+1,j); 1: (i,j)-(i,j+1)
	cross := func(e edge) ([2]float64, bool) {
		i2, j2 := e.i+1-e.dir, e.j+e.dir
		a, b := v[e.i][e.j], v[i2][j2]
		if !ok(a) || !ok(b) || (a > 0) == (b > 0) {
			return [2]float64{}, false
		}
		t := a / (a - b)
		return [2]float64{X(e.i) + t*(X(i2)-X(e.i)), Y(e.j) + t*(Y(j2)-Y(e.j))}, true
	}
	adj := map[edge][]edge{}
	pos := map[edge][2]float64{}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			var es []edge
			for _, e := range []edge{{i, j, 0}, {i, j + 1, 0}, {i, j, 1}, {i + 1, j, 1}} {
				if p, c := cross(e); c {
					pos[e] = p
					es = append(es, e)
				}
			}
			// Two crossings: one segment; four (a saddle cell): pair them
			// in order, an arbitrary but consistent choice.
			for s := 0; s+1 < len(es); s += 2 {
				adj[es[s]] = append(adj[es[s]], es[s+1])
				adj[es[s+1]] = append(adj[es[s+1]], es[s])
			}
		}
	}
	seen := map[edge]bool{}
	var out []Curve
	walk := func(start edge) {
		c := Curve{Name: name}
		e := start
		for {
			seen[e] = true
			c.Points = append(c.Points, pos[e])
			next := edge{-1, -1, -1}
			for _, m := range adj[e] {
				if !seen[m] {
					next = m
					break
				}
			}
			if next.i < 0 {
				break
			}
			e = next
		}
		if len(c.Points) >= 2 {
			out = append(out, c)
		}
	}
	// Open lines start at an end (one neighbour); closed loops anywhere.
	var keys []edge
	for e := range adj {
		keys = append(keys, e)
	}
	less := func(a, b edge) bool {
		if a.i != b.i {
			return a.i < b.i
		}
		if a.j != b.j {
			return a.j < b.j
		}
		return a.dir < b.dir
	}
	for i := 1; i < len(keys); i++ {
		for j := i; j > 0 && less(keys[j], keys[j-1]); j-- {
			keys[j], keys[j-1] = keys[j-1], keys[j]
		}
	}
	for _, e := range keys {
		if !seen[e] && len(adj[e]) == 1 {
			walk(e)
		}
	}
	for _, e := range keys {
		if !seen[e] {
			walk(e)
		}
	}
	return out
}

// OnsagerCritical is the zero-field anisotropic square-lattice Ising model's
// critical condition sinh(2|Jx|/T)·sinh(2|Jy|/T) − 1 (k_B = 1; L. Onsager,
// Phys. Rev. 65, 117 (1944)): negative in the disordered phase, positive in
// the ordered one.
func OnsagerCritical(T, Jx, Jy float64) float64 {
	if !(T > 0) {
		return math.NaN()
	}
	return math.Sinh(2*math.Abs(Jx)/T)*math.Sinh(2*math.Abs(Jy)/T) - 1
}
