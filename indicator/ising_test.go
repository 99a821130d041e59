package indicator_test

import (
	"context"
	"math"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
)

func linspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return v
}

func curveByName(t *testing.T, cs []*indicator.Curve, name string) *indicator.Curve {
	t.Helper()
	for _, c := range cs {
		if c.Name == name {
			return c
		}
	}
	t.Fatalf("no curve %q", name)
	return nil
}

// bealeCounts is the density of states g(E) of the periodic 4×4 Ising model
// (J = 1), E ≥ 0 side mirrored: P. D. Beale, Phys. Rev. Lett. 76, 78 (1996),
// values from memory (they sum to 2^16).
var bealeCounts = map[int]float64{
	-32: 2, -24: 32, -20: 64, -16: 424, -12: 1728, -8: 6688, -4: 13568, 0: 20524,
	4: 13568, 8: 6688, 12: 1728, 16: 424, 20: 64, 24: 32, 32: 2,
}

// bealeFisher returns F_T = Var(E)/T⁴ of the 4×4 Ising model (the Fisher
// information of a Boltzmann distribution in T, k_B = 1: common practice).
func bealeFisher(T float64) float64 {
	z, e1, e2 := 0.0, 0.0, 0.0
	for E, g := range bealeCounts {
		w := g * math.Exp(-float64(E)/T+(-32)/T) // shift by E_min for range
		z += w
		e1 += w * float64(E)
		e2 += w * float64(E) * float64(E)
	}
	e1 /= z
	e2 /= z
	return (e2 - e1*e1) / (T * T * T * T)
}

// gridDataset returns a dataset with 2 (unused) zero snapshots at each
// point, only to carry the grid to Run with exact sums.
func gridDataset(t *testing.T, n int, names []string, pts [][]float64) *data.Dataset {
	t.Helper()
	ds, err := data.New(2*len(pts), n, names, 2, nil, map[string]any{"generator": "test-grid"})
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range pts {
		copy(ds.Params[2*k*len(p):], p)
		copy(ds.Params[(2*k+1)*len(p):], p)
	}
	return ds
}

// bealePeak returns the maximum of Var(E)/T⁴ over 1.5 ≤ T ≤ 3.5 by
// golden-section search.
func bealePeak() float64 {
	a, b := 1.5, 3.5
	for i := 0; i < 100; i++ {
		m1, m2 := b-(b-a)/math.Phi, a+(b-a)/math.Phi
		if bealeFisher(m1) > bealeFisher(m2) {
			b = m2
		} else {
			a = m1
		}
	}
	return (a + b) / 2
}

func TestIsing4x4FisherMatchesBeale(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	xs := linspace(1.5, 3.5, 21)
	var pts [][]float64
	for _, x := range xs {
		pts = append(pts, []float64{x})
	}
	ds := gridDataset(t, 16, []string{"T"}, pts)
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Indicators: []string{indicator.Fisher}, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	fd := curveByName(t, res.Curves, "fisher_deriv")
	for i, p := range fd.Pos {
		// central difference with step Δ/100: relative error ~1e-5
		if w := bealeFisher(p[0]); math.Abs(fd.Val[i]-w) > 1e-4*w {
			t.Errorf("fisher_deriv at T=%g: %.8g, Beale Var(E)/T⁴ = %.8g", p[0], fd.Val[i], w)
		}
	}
	fj := curveByName(t, res.Curves, indicator.Fisher)
	for i, p := range fj.Pos {
		// 8·JSD/ΔT² at the midpoint: discretisation error O(ΔT²) with ΔT = 0.1
		if w := bealeFisher(p[0]); math.Abs(fj.Val[i]-w) > 0.02*w {
			t.Errorf("fisher (JSD) at T=%g: %.6g, Beale Var(E)/T⁴ = %.6g", p[0], fj.Val[i], w)
		}
	}
	tPeak := bealePeak()
	for _, c := range []*indicator.Curve{fd, fj} {
		if len(c.Peaks) != 1 || math.Abs(c.Peaks[0].At[0]-tPeak) > 0.02 {
			t.Errorf("%s peaks %+v, want one at T=%.4f", c.Name, c.Peaks, tPeak)
		}
	}
}

func TestIsingAnisotropicBoundary(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T", "Jy"}, ising.Couplings{Jx: 1})
	if err != nil {
		t.Fatal(err)
	}
	ts := linspace(1.5, 3.5, 11)
	js := linspace(0.5, 1.5, 3)
	var pts [][]float64
	for _, x := range ts {
		for _, y := range js {
			pts = append(pts, []float64{x, y})
		}
	}
	ds := gridDataset(t, 16, []string{"T", "Jy"}, pts)
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Indicators: []string{indicator.Fisher}, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	var along *indicator.Boundary
	for i, b := range res.Boundaries {
		if b.Indicator == "fisher_deriv" && b.Axis == "T" {
			along = &res.Boundaries[i]
		}
	}
	if along == nil {
		t.Fatalf("no fisher_deriv boundary along T in %+v", res.Boundaries)
	}
	if len(along.Points) != len(js) {
		t.Fatalf("boundary %v, want one point per Jy value", along.Points)
	}
	// A stronger coupling orders the system up to a higher temperature
	// (Onsager's anisotropic condition sinh(2Jx/Tc)·sinh(2Jy/Tc) = 1,
	// L. Onsager, Phys. Rev. 65, 117 (1944), for the infinite lattice; on
	// 4×4 only the direction is expected to hold).
	for i := 1; i < len(along.Points); i++ {
		if !(along.Points[i][0] > along.Points[i-1][0]) || along.Points[i][1] != js[i] {
			t.Errorf("boundary not rising with Jy: %v", along.Points)
		}
	}
	// The metric's T–T component at Jy = Jx = 1 is Var(E)/T⁴ of the
	// isotropic model, from Beale's g(E). (The map's ridge follows the trace,
	// which adds F_JyJy = Var(Σ_y s s')/T², so it lies above Beale's peak.)
	ftt := curveByName(t, res.Curves, "fisher_deriv_T_T")
	n := 0
	for i, p := range ftt.Pos {
		if p[1] == 1 {
			n++
			if w := bealeFisher(p[0]); math.Abs(ftt.Val[i]-w) > 1e-4*w {
				t.Errorf("F_TT at T=%g, Jy=1: %.8g, Beale %.8g", p[0], ftt.Val[i], w)
			}
		}
	}
	if n != len(ts) {
		t.Errorf("F_TT has %d values at Jy=1, want %d", n, len(ts))
	}
	t.Logf("fisher_deriv ridge along T: %v (Beale peak at Jy=1: %.4f)", along.Points, bealePeak())
}

// TestIsingAnisotropicZoom zooms along T around the fisher_deriv ridge of
// the anisotropic 4×4 Ising model with exact sums: every window runs along
// T at one of the grid's Jy values, and at Jy = Jx = 1 the metric's T–T
// component at the window's points between grid temperatures is Var(E)/T⁴
// from Beale's exact density of states (P. D. Beale, Phys. Rev. Lett. 76,
// 78 (1996)).
func TestIsingAnisotropicZoom(t *testing.T) {
	src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T", "Jy"}, ising.Couplings{Jx: 1})
	if err != nil {
		t.Fatal(err)
	}
	ts := linspace(1.5, 3.5, 6)
	js := []float64{0.5, 1, 1.5}
	var pts [][]float64
	for _, x := range ts {
		for _, y := range js {
			pts = append(pts, []float64{x, y})
		}
	}
	ds := gridDataset(t, 16, []string{"T", "Jy"}, pts)
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Zoom: true, Indicators: []string{indicator.Fisher}, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Zoom) == 0 {
		t.Fatal("no zoom windows")
	}
	checked := 0
	for _, z := range res.Zoom {
		other := 1 - z.Axis
		if len(z.Layout.Axes[other]) != 1 || z.Layout.Axes[other][0] != z.Around[other] || len(z.Layout.Axes[z.Axis]) != 5 {
			t.Errorf("zoom window %v around %v: want 5 points along axis %d at the peak's fixed value", z.Layout.Axes, z.Around, z.Axis)
		}
		if z.Axis != 0 || z.Around[1] != 1 {
			continue
		}
		ftt := curveByName(t, z.Curves, "fisher_deriv_T_T")
		for i, p := range ftt.Pos {
			checked++
			if w := bealeFisher(p[0]); math.Abs(ftt.Val[i]-w) > 1e-4*w {
				t.Errorf("zoom F_TT at T=%.6g, Jy=1: %.8g, Beale %.8g", p[0], ftt.Val[i], w)
			}
		}
	}
	if checked == 0 {
		t.Error("no zoom window along T at Jy = 1")
	}
	// Windows follow only the lines through the data's grid values.
	for _, z := range res.Zoom {
		other, on := 1-z.Axis, false
		for _, v := range [][]float64{ts, js}[other] {
			on = on || math.Abs(v-z.Around[other]) < 1e-9
		}
		if !on {
			t.Errorf("zoom window around %v lies on an inserted line", z.Around)
		}
	}
}

// TestKaufmanSourceFisherOnMonteCarlo scans Monte Carlo snapshots of the
// 8×8 periodic Ising model (too large to enumerate) with the Kaufman source:
// fisher_deriv at each grid temperature, the mean of (∂_T ln p)² over the
// snapshots, must agree within its bootstrap error with the exact Fisher
// information N·C/T², C the heat capacity per site from Kaufman's partition
// function (B. Kaufman, Phys. Rev. 76, 1232 (1949); F_T = Var(E)/T⁴ for a
// Boltzmann distribution, common practice).
func TestKaufmanSourceFisherOnMonteCarlo(t *testing.T) {
	const L = 8
	lat := ising.Lattice{Ly: L, Lx: L}
	temps := linspace(1.8, 3, 7)
	var pts [][]float64
	for _, T := range temps {
		pts = append(pts, []float64{T})
	}
	sim, err := ising.Simulate(context.Background(), ising.Config{Lattice: lat, Fixed: ising.Couplings{Jx: 1, Jy: 1}, Axes: []string{"T"},
		Points: pts, Samples: 1500, Seed: 4, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	ds, err := data.New(len(sim.Params), L*L, []string{"T"}, 2, []int{L, L}, map[string]any{"generator": "test-mc"})
	if err != nil {
		t.Fatal(err)
	}
	ds.States, ds.Params = sim.States, sim.Params
	src, err := ising.NewKaufmanSource(lat, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		t.Fatal(err)
	}
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{Indicators: []string{indicator.Fisher}, Bootstrap: 60, Threads: 2, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	fd := curveByName(t, res.Curves, "fisher_deriv")
	for i, p := range fd.Pos {
		T := p[0]
		want := L * L * ising.KaufmanHeatCapacity(L, L, T, 1, 1) / (T * T)
		t.Logf("T=%.2f fisher_deriv %.3f ± %.3f, exact %.3f", T, fd.Val[i], fd.Err[i], want)
		if d := math.Abs(fd.Val[i] - want); d > 4*fd.Err[i] {
			t.Errorf("T=%.2f: fisher_deriv %.4g ± %.2g, exact N·C/T² %.4g", T, fd.Val[i], fd.Err[i], want)
		}
	}
}
