package study

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat"

	"tidemark/indicator"
)

// Estimate is a transition point combined from the highest peaks of
// several 1-D indicator curves.
type Estimate struct {
	// T is the mean of the peaks' positions.
	T float64
	// Err is √(mean of the peaks' squared bootstrap errors + Spread²): a
	// typical single indicator's error (the indicators share the snapshots,
	// so averaging them does not shrink it) widened by their disagreement.
	Err float64
	// Spread is the standard deviation of the peaks' positions.
	Spread float64
	// Indicators names the curves combined, in the order of the result.
	Indicators []string
}

// Combine returns the Estimate from the highest tested peak (TopPeak) of
// each curve of res named in names; ok is false when none has one.
func Combine(res *indicator.Result, names []string) (Estimate, bool) {
	var e Estimate
	var at []float64
	sq := 0.0
	for _, c := range res.Curves {
		pk, ok := TopPeak(c)
		if !ok || !slices.Contains(names, c.Name) {
			continue
		}
		e.Indicators = append(e.Indicators, c.Name)
		at = append(at, pk.At[0])
		sq += pk.Err[0] * pk.Err[0]
	}
	if len(at) == 0 {
		return e, false
	}
	e.T = stat.Mean(at, nil)
	if len(at) > 1 {
		e.Spread = stat.StdDev(at, nil)
	}
	e.Err = math.Sqrt(sq/float64(len(at)) + e.Spread*e.Spread)
	return e, true
}

// Agreement returns how many combined standard errors apart two estimates
// lie, |a.T − b.T| / √(a.Err² + b.Err²), and says in words whether they
// agree within their errors.
func Agreement(a, b Estimate) (z float64, words string) {
	z = math.Abs(a.T-b.T) / math.Hypot(a.Err, b.Err)
	switch {
	case z <= 1:
		return z, "they agree within their errors"
	case z <= 2:
		return z, "they agree within two standard errors"
	}
	return z, fmt.Sprintf("they disagree beyond their errors (%.1f standard errors apart): the model misfits these snapshots, and the exact density's estimate is the one to trust", z)
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
