package scaling

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

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
	// Omega > 0 adds the correction term b·L^(−1/ν−ω); with Auto or
	// Corrections it is the spacing of the correction exponents (0: 1).
	Omega float64
	// Corrections > 0 fixes the number of correction terms
	// b_k·L^(−1/ν−k·ω), k = 1 … Corrections (at most MaxCorrections).
	Corrections int
	// Auto fits as many correction terms as the sizes allow (see
	// FitPeaks); it overrides Corrections.
	Auto bool
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
	if o.Corrections < 0 || o.Corrections > MaxCorrections {
		return fmt.Errorf("corrections: expected 0 to %d terms, found %d", MaxCorrections, o.Corrections)
	}
	if o.Bootstrap < 0 {
		return fmt.Errorf("bootstrap: expected 0 or more replicates, found %d", o.Bootstrap)
	}
	return nil
}

// Fit is the extrapolation of one indicator's peaks.
type Fit struct {
	// Value is λ_c and Err its standard error: Stat and Syst added in
	// quadrature.
	Value, Err float64
	// Stat is the statistical error of λ_c: the bootstrap spread (or the
	// covariance error without bootstrap), multiplied by √(χ²/dof) when the
	// points scatter more than their errors allow.
	Stat float64
	// Syst is the systematic error of the form: the larger of Drift and
	// FormShift. SystKnown says whether either could be measured (there
	// were sizes to spare); without, Err is the statistical error alone.
	Syst      float64
	SystKnown bool
	// CovErr is the error of λ_c from the weighted fit's covariance alone.
	CovErr float64
	// BootErr is the standard deviation of λ_c over the bootstrap (0 without).
	BootErr float64
	// Drift is the change of λ_c when the smallest size is left out (0 when
	// there are too few sizes to leave one out), a measure of the
	// corrections the form misses (common practice in finite-size scaling:
	// vary the smallest size).
	Drift float64
	// FormShift is the change of λ_c that the last correction term made
	// (0 without corrections, or with a fixed form): how far the
	// extrapolation still moves with the form, taken as the size of the
	// terms left out (common practice for truncated series).
	FormShift float64
	// Nu is the exponent used; NuFitted says whether it was fitted, NuErr
	// its bootstrap error when it was.
	Nu, NuErr float64
	NuFitted  bool
	// Omega is the spacing of the correction exponents (0: no correction
	// term) and Corrections the number of terms b_k·L^(−1/ν−k·ω).
	Omega       float64
	Corrections int
	// A is the amplitude of L^(−1/ν); Bs are those of the correction terms
	// and B the first of them (0 without).
	A, B float64
	Bs   []float64
	// Chi2 is the weighted χ² of the fit and Dof its degrees of freedom.
	Chi2 float64
	Dof  int
	// Weighted is false when some peak had no error: every point then gets
	// the same error, estimated from the residuals (χ²/dof = 1 by
	// construction).
	Weighted bool
	// Auto says the number of corrections followed from the sizes; Forms
	// are the forms considered then.
	Auto  bool
	Forms []Form
	// Points are the fitted points, sorted as given.
	Points []Point
}

// Form is one candidate form of an automatic fit.
type Form struct {
	// Corrections is the number of correction terms.
	Corrections int `json:"corrections"`
	// Value is its λ_c; Chi2 and Dof its fit's χ² and degrees of freedom.
	Value float64 `json:"value"`
	Chi2  float64 `json:"chi2"`
	Dof   int     `json:"dof"`
	// AIC is Akaike's criterion χ² + 2·(free parameters) (weighted fits
	// only; 0 otherwise).
	AIC float64 `json:"aic,omitempty"`
	// Chosen marks the form used.
	Chosen bool `json:"chosen"`
}

// Errors of the fit's input; commands report them as bad input.
var (
	// ErrTooFewSizes is returned when there are too few distinct sizes for
	// the requested form.
	ErrTooFewSizes = errors.New("too few sizes")
	// ErrBadInput is returned for sizes, positions or errors that cannot be fitted.
	ErrBadInput = errors.New("bad fit input")
)

// MaxCorrections is the largest number of correction terms a fit uses.
const MaxCorrections = 2

// form returns the number of correction terms and their spacing ω of a
// fixed form (Auto aside).
func (o FitOptions) form() (k int, omega float64) {
	omega = o.Omega
	if omega == 0 {
		omega = 1
	}
	switch {
	case o.Corrections > 0:
		return o.Corrections, omega
	case o.Omega > 0:
		return 1, omega
	}
	return 0, omega
}

// params returns the number of free parameters of a form with k corrections.
func (o FitOptions) params(k int) int {
	n := 2 + k
	if o.Nu == 0 {
		n++
	}
	return n
}

// MinSizes returns the number of distinct sizes the form of opt needs: one
// more than its free parameters, and never fewer than 3 (with Auto, those
// of the form without corrections).
func MinSizes(opt FitOptions) int {
	k, _ := opt.form()
	if opt.Auto {
		k = 0
	}
	return max(3, opt.params(k)+1)
}

// nuRange bounds a fitted ν.
const nuLo, nuHi = 0.2, 5.0

// FitPeaks fits λ*(L) = λ_c + a·L^(−1/ν) + Σ_k b_k·L^(−1/ν−k·ω) to the
// points by weighted least squares with weights 1/Err², fitting ν by a
// one-dimensional search of χ² when opt.Nu is 0 (variable projection: λ_c,
// a, b_k are linear for fixed ν), and estimates the statistical error of
// λ_c by a parametric bootstrap that redraws every position from a normal
// distribution with its error (common practice).
//
// With opt.Auto the form has as many correction terms as the sizes allow
// (at most MaxCorrections) while leaving at least as many degrees of
// freedom as it has correction terms, so that every correction is checked
// by a size to spare: with ν given, one term from 4 sizes, two from 6.
// Corrections to the leading shift are the rule rather than the exception
// (for the Ising torus, A. E. Ferdinand and M. E. Fisher, Phys. Rev. 185,
// 832 (1969)), and noisy peaks of small systems hide them from a
// goodness-of-fit test: Akaike's criterion χ² + 2·(free parameters)
// (H. Akaike, IEEE Trans. Autom. Control 19, 716 (1974)) is reported for
// every form considered, but does not choose. The change of λ_c made by
// the last term (FormShift) and by leaving out the smallest size (Drift)
// measure the form's systematic error; the larger is added to the
// statistical error in quadrature.
func FitPeaks(pts []Point, opt FitOptions) (*Fit, error) {
	if opt.Nu < 0 || math.IsNaN(opt.Nu) || math.IsInf(opt.Nu, 0) {
		return nil, fmt.Errorf("%w: expected ν > 0 (or 0 to fit it), found %v", ErrBadInput, opt.Nu)
	}
	if opt.Omega < 0 || math.IsNaN(opt.Omega) || math.IsInf(opt.Omega, 0) {
		return nil, fmt.Errorf("%w: expected ω > 0 (or 0 for no correction), found %v", ErrBadInput, opt.Omega)
	}
	if opt.Corrections < 0 || opt.Corrections > MaxCorrections {
		return nil, fmt.Errorf("%w: expected 0 to %d correction terms, found %d", ErrBadInput, MaxCorrections, opt.Corrections)
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
	at := make([]float64, len(pts))
	for i, p := range pts {
		sig[i], at[i] = p.Err, p.At
		if !weighted {
			sig[i] = 1
		}
	}
	k, omega := opt.form()
	if !opt.Auto {
		return fitForm(pts, at, sig, opt, k, omega, weighted, len(sizes))
	}
	var forms []Form
	best := -1
	for k := 0; k <= MaxCorrections && len(sizes)-opt.params(k) >= max(1, k); k++ {
		g, err := fitOnce(pts, at, sig, opt.Nu, k, omega)
		if err != nil || (g.NuFitted && nuAtEdge(g.Nu)) {
			continue
		}
		fm := Form{Corrections: k, Value: g.Value, Chi2: g.Chi2, Dof: g.Dof}
		if weighted {
			fm.AIC = g.Chi2 + 2*float64(opt.params(k))
		}
		best = len(forms)
		forms = append(forms, fm)
	}
	if best < 0 {
		return fitForm(pts, at, sig, opt, 0, omega, weighted, len(sizes))
	}
	forms[best].Chosen = true
	f, err := fitForm(pts, at, sig, opt, forms[best].Corrections, omega, weighted, len(sizes))
	if err != nil {
		return nil, err
	}
	f.Auto, f.Forms = true, forms
	if best > 0 && forms[best-1].Corrections == forms[best].Corrections-1 {
		f.FormShift = math.Abs(forms[best].Value - forms[best-1].Value)
		f.SystKnown = true
		f.Syst = math.Max(f.Drift, f.FormShift)
		f.Err = math.Hypot(f.Stat, f.Syst)
	}
	return f, nil
}

func nuAtEdge(nu float64) bool { return nu < nuLo*1.001 || nu > nuHi*0.999 }

// fitForm fits the form with k corrections and estimates its errors.
func fitForm(pts []Point, at, sig []float64, opt FitOptions, k int, omega float64, weighted bool, nsizes int) (*Fit, error) {
	f, err := fitOnce(pts, at, sig, opt.Nu, k, omega)
	if err != nil {
		return nil, err
	}
	if f.NuFitted && nuAtEdge(f.Nu) {
		return nil, fmt.Errorf("%w: the fitted ν ran to the edge of the range searched (%g … %g): the peaks do not determine it; give ν with --nu", ErrBadInput, nuLo, nuHi)
	}
	f.Weighted = weighted
	f.Points = append([]Point(nil), pts...)
	sig = append([]float64(nil), sig...)
	if !weighted {
		// One common error estimated from the residuals.
		s := math.Sqrt(f.Chi2 / float64(f.Dof))
		for i := range sig {
			sig[i] = s
		}
		f.CovErr *= s
		f.Chi2 = float64(f.Dof)
	}
	f.Stat = f.CovErr
	if opt.Bootstrap > 0 {
		rng := rand.New(rand.NewPCG(opt.Seed, 0x5ca1e))
		vals := make([]float64, 0, opt.Bootstrap)
		nus := make([]float64, 0, opt.Bootstrap)
		y := make([]float64, len(pts))
		for range opt.Bootstrap {
			for i := range y {
				y[i] = at[i] + sig[i]*rng.NormFloat64()
			}
			g, err := fitOnce(pts, y, sig, opt.Nu, k, omega)
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
		f.Stat = f.BootErr
		if f.NuFitted {
			f.NuErr = stat.StdDev(nus, nil)
		}
	}
	if r := f.Chi2 / float64(f.Dof); weighted && r > 1 {
		f.Stat *= math.Sqrt(r)
		f.NuErr *= math.Sqrt(r)
	}
	if nsizes > max(3, opt.params(k)+1) {
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
		if g, err := fitOnce(rp, ry, rs, opt.Nu, k, omega); err == nil {
			f.Drift = math.Abs(g.Value - f.Value)
			f.SystKnown = true
		}
	}
	f.Syst = f.Drift
	f.Err = math.Hypot(f.Stat, f.Syst)
	return f, nil
}

func describeForm(opt FitOptions) string {
	s := "λ_c + a·L^(−1/ν) with ν given"
	if opt.Nu == 0 {
		s = "λ_c + a·L^(−1/ν) with ν fitted"
	}
	k, omega := opt.form()
	switch {
	case opt.Auto:
		s += fmt.Sprintf(", and 0 to %d correction terms b_k·L^(−1/ν−k·ω), ω = %g, as many as the sizes allow", MaxCorrections, omega)
	case k == 1:
		s += fmt.Sprintf(" and a correction term b·L^(−1/ν−ω), ω = %g", omega)
	case k > 1:
		s += fmt.Sprintf(" and %d correction terms b_k·L^(−1/ν−k·ω), ω = %g", k, omega)
	}
	return s
}
