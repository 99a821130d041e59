package study

import (
	"fmt"
	"os"
	"strconv"
	"strings"

	"tidemark/data"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/indicator/phases"
)

// ParseMetricScale reads --metric-scale "name=unit,name=unit" for the two
// parameters of a 2-D grid (a parameter left out keeps unit 1).
func ParseMetricScale(s string, names []string) ([]float64, error) {
	if s == "" {
		return nil, nil
	}
	if len(names) != 2 {
		return nil, fmt.Errorf("--metric-scale: is for 2-D grids, the dataset has %d parameters", len(names))
	}
	out := []float64{1, 1}
	for _, part := range strings.Split(s, ",") {
		kv := strings.SplitN(strings.TrimSpace(part), "=", 2)
		if len(kv) != 2 {
			return nil, fmt.Errorf("--metric-scale: expected name=unit, found %q", part)
		}
		a := -1
		for i, n := range names {
			if n == strings.TrimSpace(kv[0]) {
				a = i
			}
		}
		if a < 0 {
			return nil, fmt.Errorf("--metric-scale: expected one of the parameters %s, found %q", strings.Join(names, ", "), kv[0])
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(kv[1]), 64)
		if err != nil || !(v > 0) || v > 1e300 {
			return nil, fmt.Errorf("--metric-scale: expected a positive unit for %s, found %q", names[a], kv[1])
		}
		out[a] = v
	}
	return out, nil
}

// ReadReferences reads the --reference files (CSV of x,y polylines; see
// formats) for a 2-D dataset.
func ReadReferences(files []string, names []string) ([]phases.Curve, error) {
	var out []phases.Curve
	for _, f := range files {
		if len(names) != 2 {
			return nil, fmt.Errorf("--reference %s: reference curves are for 2-D grids, the dataset has %d parameters", f, len(names))
		}
		fh, err := os.Open(f)
		if err != nil {
			return nil, fmt.Errorf("--reference: %w", err)
		}
		cs, err := phases.ReadReference(fh, names, f)
		fh.Close()
		if err != nil {
			return nil, fmt.Errorf("--reference: %w", err)
		}
		out = append(out, cs...)
	}
	return out, nil
}

// ExactReferences returns the exact boundary of the dataset's generator
// over the scanned rectangle where one is known: the zero-field
// anisotropic Ising model on a grid of two of T, Jx, Jy, whose
// infinite-lattice critical line is sinh(2Jx/T)·sinh(2Jy/T) = 1 (L.
// Onsager, Phys. Rev. 65, 117 (1944)).
func ExactReferences(ds *data.Dataset, lo indicator.Layout) []phases.Curve {
	sm, err := ising.ParseSourceMeta(ds.Meta)
	if err != nil || sm.Generator != "ising" || len(lo.Axes) != 2 {
		return nil
	}
	fixed := sm.Fixed()
	if fixed.H != 0 {
		return nil
	}
	for _, n := range lo.Names {
		if n == "h" {
			return nil
		}
	}
	f := func(x0, x1 float64) float64 {
		c := fixed
		for i, v := range []float64{x0, x1} {
			switch lo.Names[i] {
			case "T":
				c.T = v
			case "Jx":
				c.Jx = v
			case "Jy":
				c.Jy = v
			}
		}
		return phases.OnsagerCritical(c.T, c.Jx, c.Jy)
	}
	a0, a1 := lo.Axes[0], lo.Axes[1]
	return phases.Contour(f, a0[0], a0[len(a0)-1], a1[0], a1[len(a1)-1], 200, "Onsager's exact line (infinite lattice)")
}

// writePhases states the number of phases of each 2-D map and its
// boundaries.
func writePhases(p func(string, ...any), res *indicator.Result) {
	if res.Phases == nil {
		return
	}
	for i, m := range res.Phases.Maps {
		primary := ""
		if i == res.Phases.Primary {
			primary = " (reported in summary.json)"
		}
		n := 0
		for _, b := range m.Boundaries {
			n += len(b.Points)
		}
		p("  phases from %s%s: %d, with %d boundary polylines (%d points)\n", m.Indicator, primary, m.Phases.Count, len(m.Boundaries), n)
	}
	if len(res.Phases.References) > 0 {
		p("  reference lines: %d\n", len(res.Phases.References))
	}
}
