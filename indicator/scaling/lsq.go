package scaling

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// fitOnce fits the positions y with errors sig and k corrections, searching
// ν when it is not given (nu = 0).
func fitOnce(pts []Point, y, sig []float64, nu float64, k int, omega float64) (*Fit, error) {
	if nu > 0 {
		return linearFit(pts, y, sig, nu, k, omega)
	}
	chi := func(nu float64) float64 {
		f, err := linearFit(pts, y, sig, nu, k, omega)
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
	f, err := linearFit(pts, y, sig, math.Exp((a+b)/2), k, omega)
	if err != nil {
		return nil, err
	}
	f.NuFitted = true
	f.Dof--
	return f, nil
}

// linearFit is the weighted least-squares fit for fixed ν, k corrections
// and their spacing ω.
func linearFit(pts []Point, y, sig []float64, nu float64, k int, omega float64) (*Fit, error) {
	p := 2 + k
	n := len(pts)
	x := mat.NewDense(n, p, nil)
	r := mat.NewVecDense(n, nil)
	for i, pt := range pts {
		w := 1 / sig[i]
		x.Set(i, 0, w)
		for j := 1; j < p; j++ {
			x.Set(i, j, w*math.Pow(pt.Size, -1/nu-float64(j-1)*omega))
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
		Value: beta.AtVec(0), A: beta.AtVec(1), Nu: nu, Corrections: k,
		CovErr: math.Sqrt(cov.At(0, 0)),
		Chi2:   mat.Dot(&res, &res),
		Dof:    n - p,
	}
	if k > 0 {
		f.Omega = omega
		for j := 2; j < p; j++ {
			f.Bs = append(f.Bs, beta.AtVec(j))
		}
		f.B = f.Bs[0]
	}
	return f, nil
}

// Curve returns the fitted λ*(L).
func (f *Fit) Curve(L float64) float64 {
	v := f.Value + f.A*math.Pow(L, -1/f.Nu)
	for j, b := range f.Bs {
		v += b * math.Pow(L, -1/f.Nu-float64(j+1)*f.Omega)
	}
	return v
}
