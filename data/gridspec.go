package data

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// AxisSpec is one axis of a grid specification.
type AxisSpec struct {
	// Name is the parameter name.
	Name string
	// Values are the axis values in the order given.
	Values []float64
}

// GridSpec is a parsed --grid flag: one or more axes whose product is the grid.
type GridSpec struct {
	Axes []AxisSpec
}

// SpecError is a syntax error in a grid specification, at a 1-based column.
type SpecError struct {
	Text   string
	Column int
	Msg    string
}

func (e *SpecError) Error() string {
	return fmt.Sprintf("grid %q, column %d: %s", e.Text, e.Column, e.Msg)
}

// MaxGridPoints bounds the number of points a specification may produce.
const MaxGridPoints = 1 << 20

// ParseGridSpec parses comma-separated axes, each "name=start:stop:count"
// (count ≥ 1 evenly spaced values, inclusive) or "name=v1;v2;v3" (listed
// values). Names must be distinct.
func ParseGridSpec(s string) (GridSpec, error) {
	var spec GridSpec
	fail := func(col int, format string, args ...any) (GridSpec, error) {
		return GridSpec{}, &SpecError{Text: s, Column: col + 1, Msg: fmt.Sprintf(format, args...)}
	}
	if strings.TrimSpace(s) == "" {
		return fail(0, "expected name=start:stop:count or name=v1;v2, found nothing")
	}
	seen := map[string]bool{}
	total := 1
	pos := 0
	for _, part := range strings.Split(s, ",") {
		start := pos
		pos += len(part) + 1
		eq := strings.IndexByte(part, '=')
		if eq < 0 {
			return fail(start, "expected name=values, found %q with no '='", part)
		}
		name := strings.TrimSpace(part[:eq])
		if !validName(name) {
			return fail(start, "expected a parameter name (letters, digits, _), found %q", name)
		}
		if seen[name] {
			return fail(start, "axis %q given twice", name)
		}
		seen[name] = true
		body := part[eq+1:]
		bstart := start + eq + 1
		var vals []float64
		if strings.Contains(body, ":") {
			f := strings.Split(body, ":")
			if len(f) != 3 {
				return fail(bstart, "expected start:stop:count, found %q", body)
			}
			a, err := parseNum(f[0])
			if err != nil {
				return fail(bstart, "start: %v", err)
			}
			b, err := parseNum(f[1])
			if err != nil {
				return fail(bstart+len(f[0])+1, "stop: %v", err)
			}
			cs := strings.TrimSpace(f[2])
			n, err := strconv.Atoi(cs)
			ccol := bstart + len(f[0]) + len(f[1]) + 2
			if err != nil {
				return fail(ccol, "count: expected a whole number, found %q", cs)
			}
			if n < 1 || n > MaxGridPoints {
				return fail(ccol, "count: expected 1 to %d, found %d", MaxGridPoints, n)
			}
			if n == 1 && a != b {
				return fail(ccol, "count 1 needs start = stop, found %v and %v", a, b)
			}
			if n > 1 && a == b {
				return fail(ccol, "count %d needs start ≠ stop (else every value repeats %v), found start = stop", n, a)
			}
			if math.IsInf(b-a, 0) {
				return fail(bstart, "expected start and stop close enough to space evenly, found %v and %v", a, b)
			}
			vals = make([]float64, n)
			for i := range vals {
				if n == 1 {
					vals[i] = a
				} else {
					// The fraction first, so that no product exceeds b−a;
					// keep the rounded value only when it moves by far less
					// than the spacing, and never past an end point, so the
					// values stay finite and in order.
					v := a + (b-a)*(float64(i)/float64(n-1))
					if t := tidy(v); math.Abs(t-v) <= 1e-9*math.Abs(b-a)/float64(n-1) {
						v = t
					}
					vals[i] = min(max(v, min(a, b)), max(a, b))
				}
			}
			if n > 1 {
				vals[0], vals[n-1] = a, b
			}
		} else {
			col := bstart
			for _, v := range strings.Split(body, ";") {
				x, err := parseNum(v)
				if err != nil {
					return fail(col, "%v", err)
				}
				if slices.Contains(vals, x) {
					return fail(col, "value %v listed twice", x)
				}
				vals = append(vals, x)
				col += len(v) + 1
			}
		}
		total *= len(vals)
		if total > MaxGridPoints {
			return fail(start, "grid has more than %d points", MaxGridPoints)
		}
		spec.Axes = append(spec.Axes, AxisSpec{Name: name, Values: vals})
	}
	return spec, nil
}

func parseNum(s string) (float64, error) {
	t := strings.TrimSpace(s)
	x, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("expected a finite number, found %q", t)
	}
	return x, nil
}

func validName(s string) bool {
	if s == "" {
		return false
	}
	for i, r := range s {
		switch {
		case r == '_' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z'):
		case r >= '0' && r <= '9' && i > 0:
		default:
			return false
		}
	}
	return true
}

// Names returns the axis names.
func (s GridSpec) Names() []string {
	n := make([]string, len(s.Axes))
	for i, a := range s.Axes {
		n[i] = a.Name
	}
	return n
}

// Points returns the product of the axes, the last axis varying fastest.
func (s GridSpec) Points() [][]float64 {
	pts := [][]float64{{}}
	for _, ax := range s.Axes {
		var next [][]float64
		for _, p := range pts {
			for _, v := range ax.Values {
				q := append(append([]float64(nil), p...), v)
				next = append(next, q)
			}
		}
		pts = next
	}
	return pts
}

// tidy rounds x to 12 significant digits, so that evenly spaced values such
// as 1.8 + 0.1·8 come out as 2.6 rather than 2.5999999999999996 in files and
// labels. The change is far below any meaningful parameter resolution.
func tidy(x float64) float64 {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return x
	}
	y, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
	if err != nil {
		return x
	}
	return y
}
