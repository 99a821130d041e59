package scaling

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// Point is the peak position of one indicator on one finite system.
type Point struct {
	// Size is the linear size L (sites along a side, or chain length N).
	Size float64
	// At is the peak position λ*(L) and Err its standard error (0: unknown).
	At, Err float64
}

// FitOptions chooses the scaling form λ*(L) = λ_c + a·L^(−1/ν) [+ b·L^(−1/ν−ω)].
type FitOptions struct {
	// Nu is the correlation-length exponent ν; 0 fits it (at least 4 sizes).
	Nu float64
	// Omega > 0 adds the correction term b·L^(−1/ν−ω).
	Omega float64
	// Bootstrap is the number of parametric bootstrap replicates (0: the
	// error comes from the fit's covariance alone).
	Bootstrap int
	// Seed seeds the bootstrap.
	Seed uint64
}

// Check refuses settings no fit can use; its errors name the setting as
// extrapolate's flag does.
func (o FitOptions) Check() error {
	if o.Nu < 0 || math.IsNaN(o.Nu) || math.IsInf(o.Nu, 0) {
		return fmt.Errorf("nu: expected an exponent above 0, found %v", o.Nu)
	}
	if o.Omega < 0 || math.IsNaN(o.Omega) || math.IsInf(o.Omega, 0) {
		return fmt.Errorf("omega: expected an exponent above 0, found %v", o.Omega)
	}
	if o.Bootstrap < 0 {
		return fmt.Errorf("bootstrap: expected 0 or more replicates, found %d", o.Bootstrap)
	}
	return nil
}

// Fit is the extrapolation of one indicator's peaks.
type Fit struct {
	// Value is λ_c and Err its standard error: the bootstrap spread (or the
	// covariance error without bootstrap), multiplied by √(χ²/dof) when the
	// points scatter more than their errors allow, and Drift added in
	// quadrature.
	Value, Err float64
	// CovErr is the error of λ_c from the weighted fit's covariance alone.
	CovErr float64
	// BootErr is the standard deviation of λ_c over the bootstrap (0 without).
	BootErr float64
	// Drift is the change of λ_c when the smallest size is left out (0 when
	// there are too few sizes to leave one out), a measure of the
	// corrections the form misses; it is added to Err in quadrature
	// (common practice in finite-size scaling: vary the smallest size).
	Drift float64
	// Nu is the exponent used; NuFitted says whether it was fitted, NuErr
	// its bootstrap error when it was.
	Nu, NuErr float64
	NuFitted  bool
	// Omega is the correction exponent (0: no correction term).
	Omega float64
	// A and B are the amplitudes of L^(−1/ν) and L^(−1/ν−ω).
	A, B float64
	// Chi2 is the weighted χ² of the fit and Dof its degrees of freedom.
	Chi2 float64
	Dof  int
	// Weighted is false when some peak had no error: every point then gets
	// the same error, estimated from the residuals (χ²/dof = 1 by
	// construction).
	Weighted bool
	// Points are the fitted points, sorted as given.
	Points []Point
}

// Errors of the fit's input; commands report them as bad input.
var (
	// ErrTooFewSizes is returned when there are too few distinct sizes for
	// the requested form.
	ErrTooFewSizes = errors.New("too few sizes")
	// ErrBadInput is returned for sizes, positions or errors that cannot be fitted.
	ErrBadInput = errors.New("bad fit input")
)

// MinSizes returns the number of distinct sizes the form of opt needs: one
// more than its free parameters, and never fewer than 3.
func MinSizes(opt FitOptions) int {
	n := 2
	if opt.Nu == 0 {
		n++
	}
	if opt.Omega > 0 {
		n++
	}
	return max(3, n+1)
}

// nuRange bounds a fitted ν.
const nuLo, nuHi = 0.2, 5.0

// FitPeaks fits λ*(L) = λ_c + a·L^(−1/ν) (+ b·L^(−1/ν−ω)) to the points by
// weighted least squares with weights 1/Err², fitting ν by a one-dimensional
// search of χ² when opt.Nu is 0 (variable projection: λ_c, a, b are linear
// for fixed ν), and estimates the error of λ_c by a parametric bootstrap
// that redraws every position from a normal distribution with its error
// (common practice).
func FitPeaks(pts []Point, opt FitOptions) (*Fit, error) {
	if opt.Nu < 0 || math.IsNaN(opt.Nu) || math.IsInf(opt.Nu, 0) {
		return nil, fmt.Errorf("%w: expected ν > 0 (or 0 to fit it), found %v", ErrBadInput, opt.Nu)
	}
	if opt.Omega < 0 || math.IsNaN(opt.Omega) || math.IsInf(opt.Omega, 0) {
		return nil, fmt.Errorf("%w: expected ω > 0 (or 0 for no correction), found %v", ErrBadInput, opt.Omega)
	}
	sizes := map[float64]bool{}
	weighted := true
	for _, p := range pts {
		if !(p.Size > 0) || math.IsInf(p.Size, 0) || math.IsNaN(p.At) || math.IsInf(p.At, 0) || math.IsNaN(p.Err) || p.Err < 0 {
			return nil, fmt.Errorf("%w: expected a positive size, a finite position and an error ≥ 0, found L=%v at %v ± %v", ErrBadInput, p.Size, p.At, p.Err)
		}
		sizes[p.Size] = true
		if p.Err == 0 {
			weighted = false
		}
	}
	if need := MinSizes(opt); len(sizes) < need {
		return nil, fmt.Errorf("%w: expected at least %d different sizes for %s, found %d", ErrTooFewSizes, need, describeForm(opt), len(sizes))
	}
	sig := make([]float64, len(pts))
	for i, p := range pts {
		sig[i] = p.Err
		if !weighted {
			sig[i] = 1
		}
	}
	at := make([]float64, len(pts))
	for i, p := range pts {
		at[i] = p.At
	}
	f, err := fitOnce(pts, at, sig, opt)
	if err != nil {
		return nil, err
	}
	if f.NuFitted && (f.Nu < nuLo*1.001 || f.Nu > nuHi*0.999) {
		return nil, fmt.Errorf("%w: the fitted ν ran to the edge of the range searched (%g … %g): the peaks do not determine it; give ν with --nu", ErrBadInput, nuLo, nuHi)
	}
	f.Weighted = weighted
	f.Points = append([]Point(nil), pts...)
	if !weighted {
		// One common error estimated from the residuals.
		s := math.Sqrt(f.Chi2 / float64(f.Dof))
		for i := range sig {
			sig[i] = s
		}
		f.CovErr *= s
		f.Chi2 = float64(f.Dof)
	}
	f.Err = f.CovErr
	if opt.Bootstrap > 0 {
		rng := rand.New(rand.NewPCG(opt.Seed, 0x5ca1e))
		vals := make([]float64, 0, opt.Bootstrap)
		nus := make([]float64, 0, opt.Bootstrap)
		y := make([]float64, len(pts))
		for range opt.Bootstrap {
			for i := range y {
				y[i] = at[i] + sig[i]*rng.NormFloat64()
			}
			g, err := fitOnce(pts, y, sig, opt)
			if err != nil {
				continue
			}
			vals = append(vals, g.Value)
			nus = append(nus, g.Nu)
		}
		if len(vals) < 2 {
			return nil, fmt.Errorf("%w: the bootstrap refits failed", ErrBadInput)
		}
		f.BootErr = stat.StdDev(vals, nil)
		f.Err = f.BootErr
		if f.NuFitted {
			f.NuErr = stat.StdDev(nus, nil)
		}
	}
	if r := f.Chi2 / float64(f.Dof); weighted && r > 1 {
		f.Err *= math.Sqrt(r)
		f.NuErr *= math.Sqrt(r)
	}
	if len(sizes) > MinSizes(opt) {
		smallest := math.Inf(1)
		for _, p := range pts {
			smallest = math.Min(smallest, p.Size)
		}
		var rp []Point
		var ry, rs []float64
		for i, p := range pts {
			if p.Size != smallest {
				rp, ry, rs = append(rp, p), append(ry, at[i]), append(rs, sig[i])
			}
		}
		if g, err := fitOnce(rp, ry, rs, opt); err == nil {
			f.Drift = math.Abs(g.Value - f.Value)
			f.Err = math.Hypot(f.Err, f.Drift)
		}
	}
	return f, nil
}

func describeForm(opt FitOptions) string {
	s := "λ_c + a·L^(−1/ν) with ν given"
	if opt.Nu == 0 {
		s = "λ_c + a·L^(−1/ν) with ν fitted"
	}
	if opt.Omega > 0 {
		s += " and a correction term"
	}
	return s
}

// fitOnce fits the positions y with errors sig, searching ν when it is not given.
func fitOnce(pts []Point, y, sig []float64, opt FitOptions) (*Fit, error) {
	if opt.Nu > 0 {
		return linearFit(pts, y, sig, opt.Nu, opt.Omega)
	}
	chi := func(nu float64) float64 {
		f, err := linearFit(pts, y, sig, nu, opt.Omega)
		if err != nil {
			return math.Inf(1)
		}
		return f.Chi2
	}
	// A scan in ln ν, then golden-section refinement around the best.
	const n = 60
	lo, hi := math.Log(nuLo), math.Log(nuHi)
	best, bestC := 0, math.Inf(1)
	for i := 0; i <= n; i++ {
		c := chi(math.Exp(lo + (hi-lo)*float64(i)/n))
		if c < bestC {
			best, bestC = i, c
		}
	}
	a := lo + (hi-lo)*float64(max(0, best-1))/n
	b := lo + (hi-lo)*float64(min(n, best+1))/n
	g := (math.Sqrt(5) - 1) / 2
	x1, x2 := b-g*(b-a), a+g*(b-a)
	c1, c2 := chi(math.Exp(x1)), chi(math.Exp(x2))
	for b-a > 1e-10 {
		if c1 < c2 {
			b, x2, c2 = x2, x1, c1
			x1 = b - g*(b-a)
			c1 = chi(math.Exp(x1))
		} else {
			a, x1, c1 = x1, x2, c2
			x2 = a + g*(b-a)
			c2 = chi(math.Exp(x2))
		}
	}
	f, err := linearFit(pts, y, sig, math.Exp((a+b)/2), opt.Omega)
	if err != nil {
		return nil, err
	}
	f.NuFitted = true
	f.Dof--
	return f, nil
}

// linearFit is the weighted least-squares fit for fixed ν and ω.
func linearFit(pts []Point, y, sig []float64, nu, omega float64) (*Fit, error) {
	p := 2
	if omega > 0 {
		p = 3
	}
	n := len(pts)
	x := mat.NewDense(n, p, nil)
	r := mat.NewVecDense(n, nil)
	for i, pt := range pts {
		w := 1 / sig[i]
		x.Set(i, 0, w)
		x.Set(i, 1, w*math.Pow(pt.Size, -1/nu))
		if p == 3 {
			x.Set(i, 2, w*math.Pow(pt.Size, -1/nu-omega))
		}
		r.SetVec(i, w*y[i])
	}
	var xtx mat.Dense
	xtx.Mul(x.T(), x)
	var cov mat.Dense
	if err := cov.Inverse(&xtx); err != nil {
		return nil, fmt.Errorf("%w: the fit's normal equations are singular (sizes too close?): %w", ErrBadInput, err)
	}
	var xtr, beta mat.VecDense
	xtr.MulVec(x.T(), r)
	beta.MulVec(&cov, &xtr)
	var res mat.VecDense
	res.MulVec(x, &beta)
	res.SubVec(r, &res)
	f := &Fit{
		Value: beta.AtVec(0), A: beta.AtVec(1), Nu: nu, Omega: omega,
		CovErr: math.Sqrt(cov.At(0, 0)),
		Chi2:   mat.Dot(&res, &res),
		Dof:    n - p,
	}
	if p == 3 {
		f.B = beta.AtVec(2)
	}
	return f, nil
}

// Curve returns the fitted λ*(L).
func (f *Fit) Curve(L float64) float64 {
	v := f.Value + f.A*math.Pow(L, -1/f.Nu)
	if f.Omega > 0 {
		v += f.B * math.Pow(L, -1/f.Nu-f.Omega)
	}
	return v
}
