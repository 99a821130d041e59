package train

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"tidemark/data"
)

// ParseHoldout selects the grid points of g that a --holdout text names and
// returns their indices, ascending. The text is comma-separated conditions,
// one per axis, each "name=v1;v2;…" (listed values, each of which must be a
// grid value of that axis) or "name=start:stop" (every grid value in the
// closed range). A point is held out when it meets every condition; axes
// without a condition match anything. Values are compared with
// data.NamesValue (a relative tolerance of 1e-5), so that a value typed as
// printed with six significant digits ("T=2.09091") finds the grid value
// 2.0909090909…; a listed value that matches two grid values is refused as
// ambiguous.
func ParseHoldout(spec string, g *data.Grid) ([]int, error) {
	spec = strings.TrimSpace(spec)
	if spec == "" {
		return nil, nil
	}
	type cond struct {
		axis   int
		values []float64
		lo, hi float64
		isRng  bool
	}
	var conds []cond
	seen := map[string]bool{}
	for _, part := range strings.Split(spec, ",") {
		eq := strings.IndexByte(part, '=')
		if eq < 0 {
			return nil, fmt.Errorf("holdout %q: expected name=v1;v2 or name=start:stop, found %q with no '='", spec, part)
		}
		name := strings.TrimSpace(part[:eq])
		axis := slices.Index(g.Names, name)
		if axis < 0 {
			return nil, fmt.Errorf("holdout %q: expected a parameter name of the dataset %q, found %q", spec, g.Names, name)
		}
		if seen[name] {
			return nil, fmt.Errorf("holdout %q: parameter %q appears twice", spec, name)
		}
		seen[name] = true
		rhs := strings.TrimSpace(part[eq+1:])
		c := cond{axis: axis}
		if strings.Contains(rhs, ":") {
			f := strings.Split(rhs, ":")
			if len(f) != 2 {
				return nil, fmt.Errorf("holdout %q: expected a range start:stop for %s, found %q", spec, name, rhs)
			}
			lo, err1 := parseNum(f[0])
			hi, err2 := parseNum(f[1])
			if err1 != nil || err2 != nil || hi < lo {
				return nil, fmt.Errorf("holdout %q: expected a range start:stop of two numbers with start ≤ stop for %s, found %q", spec, name, rhs)
			}
			c.isRng, c.lo, c.hi = true, lo, hi
		} else {
			for _, s := range strings.Split(rhs, ";") {
				v, err := parseNum(s)
				if err != nil {
					return nil, fmt.Errorf("holdout %q: expected a number for %s, found %q", spec, name, s)
				}
				matches := 0
				for _, a := range g.Axes[axis] {
					if data.NamesValue(v, a) {
						matches++
					}
				}
				if matches == 0 {
					return nil, fmt.Errorf("holdout %q: %s=%s is not a grid value; the dataset's values of %s are %s", spec, name, strings.TrimSpace(s), name, formatList(g.Axes[axis]))
				}
				if matches > 1 {
					return nil, fmt.Errorf("holdout %q: %s=%s matches %d grid values within the tolerance of 1e-5; give more digits", spec, name, strings.TrimSpace(s), matches)
				}
				c.values = append(c.values, v)
			}
		}
		conds = append(conds, c)
	}
	var held []int
	for k, p := range g.Points {
		ok := true
		for _, c := range conds {
			v := p[c.axis]
			if c.isRng {
				ok = ok && (v >= c.lo || data.NamesValue(c.lo, v)) && (v <= c.hi || data.NamesValue(c.hi, v))
			} else {
				ok = ok && slices.ContainsFunc(c.values, func(a float64) bool { return data.NamesValue(a, v) })
			}
		}
		if ok {
			held = append(held, k)
		}
	}
	if len(held) == 0 {
		return nil, fmt.Errorf("holdout %q: selects no grid point", spec)
	}
	if g.K()-len(held) < 2 {
		return nil, fmt.Errorf("holdout %q: holds out %d of the %d grid points, expected at least 2 left for training", spec, len(held), g.K())
	}
	return held, nil
}

func parseNum(s string) (float64, error) {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("not a finite number: %q", s)
	}
	return v, nil
}

func formatList(v []float64) string {
	const most = 12
	var parts []string
	for i, x := range v {
		if i == most {
			parts = append(parts, fmt.Sprintf("… (%d in all)", len(v)))
			break
		}
		parts = append(parts, strconv.FormatFloat(x, 'g', 6, 64))
	}
	return strings.Join(parts, ", ")
}
