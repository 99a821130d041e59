package densitytest

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Logistic is a fake Sampler of N independent sites, each 1 with
// probability p(λ) = logistic(A(λ_0 − C − B·λ_1)) (λ_1 only when D = 2). Its
// distribution changes fastest on the line λ_0 = C + B·λ_1, where the Fisher
// information N A² p(1−p) of the sites peaks, and its indicators have closed
// forms as sums over the number of ones (common practice). It is enumerable
// up to 20 sites.
type Logistic struct {
	// N is the number of sites, D the number of parameters (1 or 2).
	N, D int
	// A, C and B shape p(λ).
	A, C, B float64
}

// Sites returns N.
func (s *Logistic) Sites() int { return s.N }

// Alphabet returns 2.
func (s *Logistic) Alphabet() int { return 2 }

// ParamDim returns D.
func (s *Logistic) ParamDim() int { return s.D }

// Enumerable reports whether N ≤ 20.
func (s *Logistic) Enumerable() bool { return s.N <= 20 }

// P returns the probability that a site is 1 at l.
func (s *Logistic) P(l []float64) float64 {
	z := l[0] - s.C
	if s.D > 1 {
		z -= s.B * l[1]
	}
	return 1 / (1 + math.Exp(-s.A*z))
}

// LogProb writes the log-probability of each row of xs at l into dst.
func (s *Logistic) LogProb(dst []float64, xs []uint8, l []float64) error {
	if len(l) != s.D {
		return fmt.Errorf("logistic: expected %d parameters, found %d", s.D, len(l))
	}
	if len(xs) != len(dst)*s.N {
		return fmt.Errorf("logistic: expected %d snapshot values, found %d", len(dst)*s.N, len(xs))
	}
	p := s.P(l)
	for m := range dst {
		ones := 0
		for _, v := range xs[m*s.N : (m+1)*s.N] {
			ones += int(v)
		}
		dst[m] = float64(ones)*math.Log(p) + float64(s.N-ones)*math.Log1p(-p)
	}
	return nil
}

// Sample draws n snapshots at l into dst.
func (s *Logistic) Sample(dst []uint8, n int, l []float64, rng *rand.Rand) error {
	if len(l) != s.D {
		return fmt.Errorf("logistic: expected %d parameters, found %d", s.D, len(l))
	}
	p := s.P(l)
	for i := range dst[:n*s.N] {
		dst[i] = 0
		if rng.Float64() < p {
			dst[i] = 1
		}
	}
	return nil
}

// Product is a fake enumerable Source of N independent sites, each 1 with
// probability P(λ), with one parameter.
type Product struct {
	N int
	P func(l []float64) float64
}

// Sites returns N.
func (b Product) Sites() int { return b.N }

// Alphabet returns 2.
func (b Product) Alphabet() int { return 2 }

// ParamDim returns 1.
func (b Product) ParamDim() int { return 1 }

// Enumerable reports true.
func (b Product) Enumerable() bool { return true }

// LogProb writes the log-probability of each row of xs at l into dst.
func (b Product) LogProb(dst []float64, xs []uint8, l []float64) error {
	if len(l) != 1 {
		return fmt.Errorf("product: expected 1 parameter, found %d", len(l))
	}
	if len(xs) != len(dst)*b.N {
		return fmt.Errorf("product: expected %d snapshot values, found %d", len(dst)*b.N, len(xs))
	}
	p := b.P(l)
	for m := range dst {
		s := 0.0
		for _, v := range xs[m*b.N : (m+1)*b.N] {
			if v == 1 {
				s += math.Log(p)
			} else {
				s += math.Log1p(-p)
			}
		}
		dst[m] = s
	}
	return nil
}
