package scaling

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Combined merges several estimates of the same λ_c.
type Combined struct {
	// Value and Err are the inverse-variance weighted mean and its error,
	// inflated by √(χ²/dof) when the estimates scatter more than their
	// errors allow.
	Value, Err float64
	// Chi2 is Σ (v_i − mean)²/err_i² and Dof = n − 1.
	Chi2 float64
	Dof  int
	// PValue is the probability of a χ² at least this large if all
	// estimates measured the same value with the stated errors (1 for a
	// single estimate).
	PValue float64
	// Agree says whether the estimates agree within their errors
	// (PValue ≥ AgreeLevel).
	Agree bool
	// Inflated says whether Err was multiplied by √(χ²/dof).
	Inflated bool
	// Floored says whether Err was raised to the smallest single error.
	Floored bool
}

// AgreeLevel is the χ² p-value below which estimates are said to disagree.
const AgreeLevel = 0.05

// Combine returns the inverse-variance weighted mean of values with errors
// errs (all errors must be positive). The indicators of one scan come from
// the same snapshots, so their errors are correlated and the plain
// inverse-variance error would be optimistic by up to √n: the combined
// error is never below the smallest single error (which is exact for fully
// correlated estimates).
func Combine(values, errs []float64) Combined {
	var sw, swx float64
	for i, v := range values {
		w := 1 / (errs[i] * errs[i])
		sw += w
		swx += w * v
	}
	c := Combined{Value: swx / sw, Err: 1 / math.Sqrt(sw), Dof: len(values) - 1, PValue: 1}
	for i, v := range values {
		d := (v - c.Value) / errs[i]
		c.Chi2 += d * d
	}
	if c.Dof > 0 {
		c.PValue = distuv.ChiSquared{K: float64(c.Dof)}.Survival(c.Chi2)
		if r := c.Chi2 / float64(c.Dof); r > 1 {
			c.Err *= math.Sqrt(r)
			c.Inflated = true
		}
	}
	lo := math.Inf(1)
	for _, e := range errs {
		lo = math.Min(lo, e)
	}
	if c.Err < lo {
		c.Err, c.Floored = lo, true
	}
	c.Agree = c.PValue >= AgreeLevel
	return c
}
