package report

import (
	"bytes"
	"context"
	"encoding/json"
	"image"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
)

// isingScan is an exact-sum scan of the periodic 4×4 Ising model over
// (T, Jy) at Jx = 1 from low T, where the Fisher information is
// exponentially small, to high T: its maps span many decades, the case in
// which a linear colour scale shows one bright cell and black elsewhere.
// The scan is shared by the tests that read it (none changes it).
func isingScan(t *testing.T) *indicator.Result {
	t.Helper()
	isingOnce.Do(func() { isingRes, isingErr = runIsingScan() })
	if isingErr != nil {
		t.Fatal(isingErr)
	}
	return isingRes
}

var (
	isingOnce sync.Once
	isingRes  *indicator.Result
	isingErr  error
)

func runIsingScan() (*indicator.Result, error) {
	src, err := ising.NewSource(ising.Lattice{Ly: 4, Lx: 4}, []string{"T", "Jy"}, ising.Couplings{Jx: 1})
	if err != nil {
		return nil, err
	}
	var pts [][]float64
	for i := 0; i < 9; i++ {
		for j := 0; j < 7; j++ {
			pts = append(pts, []float64{0.6 + 0.4*float64(i), 0.25 + 0.25*float64(j)})
		}
	}
	ds, err := data.New(2*len(pts), 16, []string{"T", "Jy"}, 2, nil, map[string]any{"generator": "test"})
	if err != nil {
		return nil, err
	}
	for k, p := range pts {
		copy(ds.Params[4*k:], p)
		copy(ds.Params[4*k+2:], p)
	}
	return indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Threads: 2, Indicators: []string{indicator.Fisher, indicator.Local, indicator.LBC}})
}

// cellLuminance renders p and returns the luminance (0..1, Rec. 709
// weights) at the centre of every cell (xs × ys) of its heat map.
func cellLuminance(t *testing.T, p *plot.Plot, xs, ys []float64) []float64 {
	t.Helper()
	w, h := 16*vg.Centimeter, 15*vg.Centimeter
	c := vgimg.New(w, h)
	dc := draw.New(c)
	p.Draw(dc)
	da := p.DataCanvas(dc)
	img := c.Image()
	b := img.Bounds()
	var out []float64
	for _, x := range xs {
		for _, y := range ys {
			px := da.X(p.X.Norm(x))
			py := da.Y(p.Y.Norm(y))
			ix := int(float64(px) / float64(w) * float64(b.Dx()))
			iy := b.Dy() - 1 - int(float64(py)/float64(h)*float64(b.Dy()))
			r, g, bl, _ := img.At(ix, iy).RGBA()
			out = append(out, (0.2126*float64(r)+0.7152*float64(g)+0.0722*float64(bl))/65535)
		}
	}
	return out
}

// spread is the interquartile range of v: when it is large, at least half
// of the cells differ visibly from one another.
func spread(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	q := func(f float64) float64 { return s[int(math.Round(f*float64(len(s)-1)))] }
	return q(0.75) - q(0.25)
}

// TestMapsShowStructure: in every 2-D picture (per-curve maps and phase
// maps) of a map spanning many decades, the middle half of the cells spans
// at least 15% of the luminance range (a linear scale set by the largest
// cell puts nearly all cells at the same near-black luminance). The
// colour map's lightness rises monotonically (Moreland's extended black
// body), so the same holds in grey.
func TestMapsShowStructure(t *testing.T) {
	res := isingScan(t)
	fd := res.Curves[0]
	for _, c := range res.Curves {
		if c.Name == "fisher_deriv" {
			fd = c
		}
	}
	lo, hi := math.Inf(1), 0.0
	for _, v := range fd.Val {
		if v > 0 {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if hi/lo < 1e3 {
		t.Fatalf("fisher_deriv spans only %.3g to %.3g: not the test case", lo, hi)
	}
	t.Logf("fisher_deriv spans %.3g to %.3g", lo, hi)
	// The test tells the two scales apart: the same map on a linear scale
	// from its smallest to its largest value has no visible structure.
	{
		var xs, ys []float64
		for _, q := range fd.Pos {
			xs, ys = append(xs, q[0]), append(ys, q[1])
		}
		g := &grid{xs: distinct(xs), ys: distinct(ys)}
		g.z = make([][]float64, len(g.ys))
		for r := range g.z {
			g.z[r] = make([]float64, len(g.xs))
		}
		for i, q := range fd.Pos {
			g.z[sort.SearchFloat64s(g.ys, q[1])][sort.SearchFloat64s(g.xs, q[0])] = fd.Val[i]
		}
		min := math.Inf(1)
		for _, v := range fd.Val {
			min = math.Min(min, v)
		}
		p := plot.New()
		p.Add(scaledHeat(g, colourScale{Lo: min, Hi: hi}))
		if s := spread(cellLuminance(t, p, g.xs, g.ys)); s >= 0.10 {
			t.Errorf("a linear scale gives a spread of %.3f: the test would not catch it", s)
		} else {
			t.Logf("linear scale: spread %.3f", s)
		}
	}
	for _, c := range res.Curves {
		p, err := heatPlot(c, res)
		if err != nil || p == nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		var xs, ys []float64
		for _, q := range c.Pos {
			xs, ys = append(xs, q[0]), append(ys, q[1])
		}
		if s := spread(cellLuminance(t, p, distinct(xs), distinct(ys))); s < 0.10 {
			t.Errorf("%s: the middle half of the cells spans %.3f of the luminance range, want ≥ 0.10", c.Name, s)
		}
	}
	if res.Phases == nil {
		t.Fatal("no phase maps")
	}
	for _, m := range res.Phases.Maps {
		p, err := phasePlot(res, m)
		if err != nil {
			t.Fatal(err)
		}
		if s := spread(cellLuminance(t, p, res.Layout.Axes[0], res.Layout.Axes[1])); s < 0.10 {
			t.Errorf("phase map %s: the middle half of the cells spans %.3f of the luminance range, want ≥ 0.10", m.Indicator, s)
		}
	}
}

// TestSummaryPhases checks summary.json's phases and boundaries of a 2-D
// scan: a label per scanned grid point, a count matching the labels, and
// boundary points as [x, y] pairs with errors.
func TestSummaryPhases(t *testing.T) {
	res := isingScan(t)
	dir := filepath.Join(t.TempDir(), "scan")
	if _, err := Write(dir, false, res, Info{Source: "exact"}); err != nil {
		t.Fatal(err)
	}
	var sum struct {
		Phases struct {
			Count  int
			Labels []int
		}
		Boundaries []struct {
			Indicator string
			Between   []int
			Points    [][]float64
			Err       [][]float64
		}
	}
	b, _ := os.ReadFile(filepath.Join(dir, "summary.json"))
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if len(sum.Phases.Labels) != res.Layout.K() || sum.Phases.Count < 1 {
		t.Fatalf("phases %+v, want %d labels", sum.Phases, res.Layout.K())
	}
	maxL := 0
	for _, l := range sum.Phases.Labels {
		maxL = max(maxL, l)
	}
	if maxL+1 != sum.Phases.Count {
		t.Errorf("labels up to %d, count %d", maxL, sum.Phases.Count)
	}
	n := 0
	for _, bd := range sum.Boundaries {
		if !strings.HasPrefix(bd.Indicator, "phases:") {
			continue
		}
		n++
		if len(bd.Between) != 2 || len(bd.Points) == 0 || len(bd.Err) != len(bd.Points) || len(bd.Points[0]) != 2 {
			t.Errorf("boundary %+v", bd)
		}
	}
	if sum.Phases.Count > 1 && n == 0 {
		t.Errorf("%d phases but no boundary between them in %s", sum.Phases.Count, b)
	}
	for _, f := range []string{"phases_fisher.svg", "phases_fisher.png"} {
		if st, err := os.Stat(filepath.Join(dir, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
}

// TestPhaseSectionRendersInChromium renders a 2-D scan's report.html in
// headless Chromium: the page has the phase-diagram section and the
// screenshot is not blank.
func TestPhaseSectionRendersInChromium(t *testing.T) {
	bin, err := exec.LookPath("chromium")
	if err != nil {
		if _, e := os.Stat("/usr/bin/chromium"); e != nil {
			t.Skip("chromium is not installed (Debian package chromium): report.html was not rendered")
		}
		bin = "/usr/bin/chromium"
	}
	res := isingScan(t)
	dir := filepath.Join(t.TempDir(), "scan")
	if _, err := Write(dir, false, res, Info{Source: "exact"}); err != nil {
		t.Fatal(err)
	}
	page, _ := os.ReadFile(filepath.Join(dir, "report.html"))
	for _, want := range []string{"<h2>Phase diagram</h2>", "phases_fisher.svg", "between phases"} {
		if !bytes.Contains(page, []byte(want)) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	shot := filepath.Join(t.TempDir(), "page.png")
	abs, _ := filepath.Abs(filepath.Join(dir, "report.html"))
	cmd := exec.Command(bin, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-component-update", "--disable-sync", "--no-first-run", "--user-data-dir="+t.TempDir(),
		"--screenshot="+shot, "--window-size=1200,1600", "file://"+abs)
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, out.String())
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v\n%s", err, out.String())
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	var _ image.Image = img
	frac, colours := inked(img)
	if frac < 0.05 || colours < 20 {
		t.Errorf("screenshot looks blank: %.1f%% of pixels differ from the background, %d distinct colours", 100*frac, colours)
	}
}
