package data

import (
	"fmt"
	"slices"
)

// ParsePoint parses one parameter point written as a grid specification
// with one value per axis, e.g. "T=2.3,h=0.1", into the order of names:
// every name exactly once, in any order.
func ParsePoint(s string, names []string) ([]float64, error) {
	spec, err := ParseGridSpec(s)
	if err != nil {
		return nil, err
	}
	lam := make([]float64, len(names))
	got := map[string]bool{}
	for _, ax := range spec.Axes {
		i := slices.Index(names, ax.Name)
		if i < 0 {
			return nil, fmt.Errorf("expected the parameters %q, found %q", names, ax.Name)
		}
		if len(ax.Values) != 1 {
			return nil, fmt.Errorf("expected one value of %s, found %d", ax.Name, len(ax.Values))
		}
		lam[i] = ax.Values[0]
		got[ax.Name] = true
	}
	for _, n := range names {
		if !got[n] {
			return nil, fmt.Errorf("expected a value for every parameter %q, %s is missing", names, n)
		}
	}
	return lam, nil
}

// ParsePoints parses a grid specification whose axes are names, each once
// in any order, and returns its points with their values in the order of
// names.
func ParsePoints(s string, names []string) ([][]float64, error) {
	spec, err := ParseGridSpec(s)
	if err != nil {
		return nil, err
	}
	gn := spec.Names()
	perm := make([]int, len(names))
	for i, n := range names {
		perm[i] = slices.Index(gn, n)
		if perm[i] < 0 || len(gn) != len(names) {
			return nil, fmt.Errorf("expected the parameters %q, found %q", names, gn)
		}
	}
	var out [][]float64
	for _, p := range spec.Points() {
		q := make([]float64, len(names))
		for i := range names {
			q[i] = p[perm[i]]
		}
		out = append(out, q)
	}
	return out, nil
}
