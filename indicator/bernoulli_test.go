package indicator

import (
	"math"
	"math/rand/v2"

	"tidemark/data/density/densitytest"

	"tidemark/data"
)

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
func bernoulliData(src *densitytest.Logistic, xs, ys []float64, per int, seed uint64) *data.Dataset {
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
	ds, err := data.New(len(pts)*per, src.N, names, 2, nil, map[string]any{"generator": "test-bernoulli"})
	if err != nil {
		panic(err)
	}
	for k, p := range pts {
		rng := rand.New(rand.NewPCG(seed, uint64(k)))
		src.Sample(ds.States[k*per*src.N:(k+1)*per*src.N], per, p, rng)
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
