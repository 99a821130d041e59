package scorestat

import (
	"bytes"
	"encoding/csv"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/ising"
)

// TestQuantileType7 checks Quantile against values of the "type 7" rule
// worked by hand from its definition, h = (n−1)p, x_⌊h⌋ + (h−⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋)
// (Hyndman & Fan, The American Statistician 50, 361 (1996); R's default).
func TestQuantileType7(t *testing.T) {
	for _, tc := range []struct {
		x    []float64
		p    float64
		want float64
	}{
		{[]float64{1, 2, 3, 4}, 0.25, 1.75},
		{[]float64{1, 2, 3, 4}, 0.5, 2.5},
		{[]float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, 0.1, 1.9},
		{[]float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, 0.999, 9.991},
		{[]float64{3}, 0.001, 3},
		{[]float64{1, 5}, 1, 5},
	} {
		if got := Quantile(tc.x, tc.p); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("Quantile(%v, %v) = %v, want %v", tc.x, tc.p, got, tc.want)
		}
	}
}

// TestMeanErr checks the mean, sample standard deviation and standard
// error on a textbook example (common practice): 2, 4, 4, 4, 5, 5, 7, 9 has
// mean 5 and Σ(x−5)² = 32, so s = √(32/7) and the error s/√8.
func TestMeanErr(t *testing.T) {
	m, s, e := MeanErr([]float64{2, 4, 4, 4, 5, 5, 7, 9})
	if ws := math.Sqrt(32.0 / 7); math.Abs(m-5) > 1e-12 || math.Abs(s-ws) > 1e-12 || math.Abs(e-ws/math.Sqrt(8)) > 1e-12 {
		t.Errorf("MeanErr = %v, %v, %v; want 5, %v, %v", m, s, e, ws, ws/math.Sqrt(8))
	}
	if m, s, e := MeanErr([]float64{1.5}); m != 1.5 || s != 0 || e != 0 {
		t.Errorf("one value: %v, %v, %v; want 1.5, 0, 0", m, s, e)
	}
}

// exactFixture returns the exact 4×4 Ising source over T and a dataset of
// its exact samples, n per temperature.
func exactFixture(t *testing.T, temps []float64, n int) (*ising.Source, *data.Dataset) {
	t.Helper()
	src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	ds, err := data.New(n*len(temps), 16, []string{"T"}, 2, []int{4, 4}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	for k, T := range temps {
		if err := src.Sample(ds.States[k*n*16:(k+1)*n*16], n, []float64{T}, rng); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < n; i++ {
			ds.Params[k*n+i] = T
		}
	}
	return src, ds
}

// TestScoreMatchesSourceAndThreads checks Score against the exact Ising
// density called directly (ln p = −E/T − ln Z by enumeration) and that its
// result does not depend on the number of goroutines.
func TestScoreMatchesSourceAndThreads(t *testing.T) {
	src, ds := exactFixture(t, []float64{2, 3}, 50)
	one, params, err := Score(src, ds, nil, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	three, _, err := Score(src, ds, nil, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	at, atParams, err := Score(src, ds, []float64{2.5}, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	lp := make([]float64, 1)
	for r := 0; r < ds.M; r++ {
		if err := src.LogProb(lp, ds.Row(r), ds.ParamRow(r)); err != nil {
			t.Fatal(err)
		}
		if one[r] != lp[0] || three[r] != one[r] || params[r] != ds.Params[r] {
			t.Fatalf("row %d: %v (3 threads %v) at %v, want %v at %v", r, one[r], three[r], params[r], lp[0], ds.Params[r])
		}
		if err := src.LogProb(lp, ds.Row(r), []float64{2.5}); err != nil {
			t.Fatal(err)
		}
		if at[r] != lp[0] || atParams[r] != 2.5 {
			t.Fatalf("row %d at T=2.5: %v at %v, want %v", r, at[r], atParams[r], lp[0])
		}
	}
}

// TestStatsFlagsTheCheckerboard checks the per-point table against the
// scores and that the checkerboard, the highest-energy state of the
// ferromagnet (which exact samples at T = 2 essentially never show), is
// flagged while few typical snapshots are.
func TestStatsFlagsTheCheckerboard(t *testing.T) {
	src, ds := exactFixture(t, []float64{2, 3}, 200)
	for i := range ds.Row(0) {
		ds.Row(0)[i] = uint8((i/4 + i%4) % 2)
	}
	logp, params, err := Score(src, ds, nil, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	pts, flags, err := Stats(src, logp, params, 1, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(pts) != 2 || pts[0].Lambda[0] != 2 || pts[1].Lambda[0] != 3 {
		t.Fatalf("points %+v", pts)
	}
	if flags[0] != 1 {
		t.Errorf("the checkerboard (NLL %.2f nats) is not flagged; range at T=2 [%v, %v]", -logp[0], pts[0].RefLo, pts[0].RefHi)
	}
	nflag := 0
	for k, p := range pts {
		s, s2 := 0.0, 0.0
		for _, r := range p.Rows {
			s -= logp[r]
			s2 += logp[r] * logp[r]
		}
		n := float64(len(p.Rows))
		m := s / n
		sd := math.Sqrt((s2 - n*m*m) / (n - 1))
		if math.Abs(p.MeanNLL-m) > 1e-9 || math.Abs(p.SEM-sd/math.Sqrt(n)) > 1e-9 {
			t.Errorf("point %d: mean %v sem %v, want %v %v", k, p.MeanNLL, p.SEM, m, sd/math.Sqrt(n))
		}
		nflag += p.Flagged
	}
	if nflag > 6 {
		t.Errorf("%d of %d snapshots flagged; expected about 0.2%% by chance plus the checkerboard", nflag, ds.M)
	}
	var b bytes.Buffer
	if err := WritePointsCSV(&b, []string{"T"}, pts, 16); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil || len(rows) != 3 || rows[0][0] != "T" || !strings.Contains(strings.Join(rows[0], ","), "mean_bits_per_site") {
		t.Errorf("points CSV %v, %v", rows, err)
	}
}

// matrixSource lends the exact source the matrix method of a model.
type matrixSource struct{ *ising.Source }

func (m matrixSource) LogProbMatrix(xs []uint8, n int, lambdas [][]float64, threads int) ([]float64, error) {
	out := make([]float64, n*len(lambdas))
	col := make([]float64, n)
	for k, l := range lambdas {
		if err := m.LogProb(col, xs, l); err != nil {
			return nil, err
		}
		for i, v := range col {
			out[i*len(lambdas)+k] = v
		}
	}
	return out, nil
}

// TestPosteriorFindsTheTemperature gives exact samples of the 4×4 Ising
// model at T = 2 and 3 to the exact density: each label group's 68% interval
// over a grid of T must contain its temperature, and the snapshots'
// posteriors must be normalised. A 68% interval misses the truth for about a
// third of all draws, so this holds for the fixture's seed (5, 6), not for
// every seed.
func TestPosteriorFindsTheTemperature(t *testing.T) {
	src, ds := exactFixture(t, []float64{2, 3}, 60)
	var grid [][]float64
	for i := 0; i < 81; i++ {
		grid = append(grid, []float64{1.5 + 0.025*float64(i)})
	}
	pr, err := Posterior(matrixSource{src}, ds, grid, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(pr.Groups) != 2 {
		t.Fatalf("%d groups, want 2", len(pr.Groups))
	}
	for _, g := range pr.Groups {
		s := g.Axes[0]
		if !(s.Lo <= g.Label[0] && g.Label[0] <= s.Hi) {
			t.Errorf("group T = %v: 68%% interval [%v, %v]", g.Label[0], s.Lo, s.Hi)
		}
	}
	sum := 0.0
	for _, v := range pr.LogPost[:len(grid)] {
		sum += math.Exp(v)
	}
	if math.Abs(sum-1) > 1e-9 {
		t.Errorf("snapshot 0's posterior sums to %v", sum)
	}
	if a := pr.Arrays(ds.M, 1); len(a) != 13 || a[1].Name != "log_posterior" {
		t.Errorf("arrays %v", a)
	}
}

// TestWriteScoresCSVBitsPerSite checks the CSV's bits per site against the
// conversion −ln p / (N ln 2) (common practice).
func TestWriteScoresCSVBitsPerSite(t *testing.T) {
	var b bytes.Buffer
	if err := WriteScoresCSV(&b, []string{"T"}, []float64{-16 * math.Ln2, -8}, []float64{2, 3}, 16); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(rows[0], ",") != "index,T,logp,bits_per_site" || rows[1][3] != "1" || rows[2][3] != strconv.FormatFloat(8.0/16/math.Ln2, 'g', -1, 64) {
		t.Errorf("CSV %v", rows)
	}
}
