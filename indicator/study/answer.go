package study

import (
	"fmt"
	"strings"

	"tidemark/indicator"
)

// Answer returns the indicator whose peak gives the estimate of a
// transition in a 1-D scan, and that peak: lbc when it has a peak above the
// noise, else pbm, else sl (the other indicators that weigh the whole
// grid), else the curve whose highest peak has the smallest position
// error. lbc is preferred because every cut weighs the snapshots of the
// whole grid, so a misfit of the model at a few points cannot make a sharp
// wrong peak, whereas the local indicators (local, fisher, fisher_deriv)
// follow the model point by point and a local misfit can make a sharp peak
// whose bootstrap error is small but which is wrong. It is not always the
// closest to the exact density's peak, which is why the demo prints that
// comparison beside it.
func Answer(res *indicator.Result) (string, indicator.Peak, bool) {
	for _, want := range []string{indicator.LBC, indicator.PBM, indicator.SL} {
		for _, c := range res.Curves {
			if c.Name == want {
				if pk, ok := TopPeak(c); ok {
					return c.Name, pk, true
				}
			}
		}
	}
	var best indicator.Peak
	name := ""
	for _, c := range res.Curves {
		top, ok := TopPeak(c)
		if !ok {
			continue
		}
		if name == "" || top.Err[0] < best.Err[0] {
			name, best = c.Name, top
		}
	}
	return name, best, name != ""
}

// TopPeak returns the highest peak of a 1-D curve that stands above the
// bootstrap noise and has a position error.
func TopPeak(c *indicator.Curve) (indicator.Peak, bool) {
	var top *indicator.Peak
	for i := range c.Peaks {
		q := &c.Peaks[i]
		if !q.Tested || len(q.Err) != 1 || !(q.Err[0] > 0) {
			continue
		}
		if top == nil || q.Height > top.Height {
			top = q
		}
	}
	if top == nil {
		return indicator.Peak{}, false
	}
	return *top, true
}

// FormatPeak states a peak's position with its error on every axis that
// has one, e.g. "T=2.2744 ± 0.014".
func FormatPeak(names []string, pk indicator.Peak) string {
	parts := make([]string, len(pk.At))
	for i, v := range pk.At {
		if i < len(pk.Err) && pk.Err[i] > 0 {
			parts[i] = fmt.Sprintf("%s=%.5g ± %.2g", names[i], v, pk.Err[i])
		} else {
			parts[i] = fmt.Sprintf("%s=%.5g", names[i], v)
		}
	}
	return strings.Join(parts, ", ")
}
