package indicator

import (
	"fmt"
	"math"
	"math/rand/v2"

	"tidemark/data"
)

// bernoulli is a test Source: N independent sites, each 1 with probability
// p(λ) = logistic(a(λ_0 − c − b·λ_1)) (λ_1 only in 2-D). Its indicators have
// closed forms as sums over the number of ones (binomial terms).
type bernoulli struct {
	n       int
	d       int
	a, c, b float64
}

func (s *bernoulli) Sites() int       { return s.n }
func (s *bernoulli) Alphabet() int    { return 2 }
func (s *bernoulli) ParamDim() int    { return s.d }
func (s *bernoulli) Enumerable() bool { return s.n <= 20 }

func (s *bernoulli) p(l []float64) float64 {
	z := l[0] - s.c
	if s.d > 1 {
		z -= s.b * l[1]
	}
	return 1 / (1 + math.Exp(-s.a*z))
}

func (s *bernoulli) LogProb(dst []float64, xs []uint8, l []float64) error {
	if len(l) != s.d {
		return fmt.Errorf("bernoulli: expected %d parameters, found %d", s.d, len(l))
	}
	p := s.p(l)
	for m := range dst {
		ones := 0
		for _, v := range xs[m*s.n : (m+1)*s.n] {
			ones += int(v)
		}
		dst[m] = float64(ones)*math.Log(p) + float64(s.n-ones)*math.Log1p(-p)
	}
	return nil
}

func (s *bernoulli) Sample(dst []uint8, n int, l []float64, rng *rand.Rand) error {
	p := s.p(l)
	for i := range dst[:n*s.n] {
		dst[i] = 0
		if rng.Float64() < p {
			dst[i] = 1
		}
	}
	return nil
}

// logBinom returns log C(n, k).
func logBinom(n, k int) float64 {
	a, _ := math.Lgamma(float64(n + 1))
	b, _ := math.Lgamma(float64(k + 1))
	c, _ := math.Lgamma(float64(n - k + 1))
	return a - b - c
}

// countProb returns P(a given snapshot with k ones) = p^k (1−p)^(n−k).
func countProb(p float64, n, k int) float64 {
	return math.Exp(float64(k)*math.Log(p) + float64(n-k)*math.Log1p(-p))
}

// bernoulliData draws a dataset of per samples at each point of the 1-D
// grid xs (or the product grid xs × ys when ys is not nil).
func bernoulliData(src *bernoulli, xs, ys []float64, per int, seed uint64) *data.Dataset {
	var pts [][]float64
	names := []string{"T"}
	if ys == nil {
		for _, x := range xs {
			pts = append(pts, []float64{x})
		}
	} else {
		names = []string{"T", "J"}
		for _, x := range xs {
			for _, y := range ys {
				pts = append(pts, []float64{x, y})
			}
		}
	}
	ds, err := data.New(len(pts)*per, src.n, names, 2, nil, map[string]any{"generator": "test-bernoulli"})
	if err != nil {
		panic(err)
	}
	for k, p := range pts {
		rng := rand.New(rand.NewPCG(seed, uint64(k)))
		src.Sample(ds.States[k*per*src.n:(k+1)*per*src.n], per, p, rng)
		for i := 0; i < per; i++ {
			copy(ds.Params[(k*per+i)*ds.D:], p)
		}
	}
	return ds
}

func linspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return v
}
