package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tidemark/indicator"
)

var (
	curveColor = color.RGBA{R: 0x1f, G: 0x4e, B: 0x99, A: 0xff}
	bandColor  = color.NRGBA{R: 0x1f, G: 0x4e, B: 0x99, A: 0x40}
	peakColor  = color.RGBA{R: 0xc0, G: 0x30, B: 0x20, A: 0xff}
	ridgeA     = color.RGBA{R: 0x00, G: 0xb4, B: 0xff, A: 0xff}
	ridgeB     = color.RGBA{R: 0x00, G: 0xd0, B: 0x40, A: 0xff}
)

// describe returns a readable title for a curve.
func describe(c *indicator.Curve) string {
	base := map[string]string{
		indicator.LBC:    "learning by confusion (Bayes-optimal), 1 − P_err",
		indicator.SL:     "supervised learning (Bayes-optimal), |dŷ/dλ|",
		indicator.PBM:    "prediction-based method (Bayes-optimal), dŷ/dλ",
		indicator.Local:  "local Bayes error: total variation of neighbours",
		indicator.Fisher: "Fisher information from neighbour JSD",
	}[c.Indicator]
	switch {
	case c.Name == "fisher_deriv":
		base = "Fisher information from ∂λ log p"
	case c.Indicator == indicator.Fisher && c.Axis < 0:
		base = "Fisher metric component from ∂λ log p"
	case c.Indicator == indicator.PBM && c.Axis < 0:
		base = "prediction-based method: divergence of ŷ"
	}
	return c.Name + ": " + base
}

// refinedNote warns, for the local indicator on a grid refined by a factor
// refine > 1, that its heights are not comparable with a scan at the data's
// grid points: neighbours there lie 1/refine of a grid step apart, so their
// total-variation distance is smaller.
func refinedNote(c *indicator.Curve, refine int) string {
	if refine <= 1 || c.Indicator != indicator.Local {
		return ""
	}
	return fmt.Sprintf(". On this grid, refined %d×, neighbouring points lie 1/%d of a data grid step apart, so the heights are smaller than, and not comparable with, those of a scan at the data's grid points; compare positions, not heights", refine, refine)
}

// Pictures renders every curve as <name>.svg and <name>.png: 1-D curves
// with a ±1 standard error band and peak markers, 2-D curves as heat maps
// with the boundary lines found from them.
func Pictures(res *indicator.Result) (map[string][]byte, error) {
	out := map[string][]byte{}
	for _, c := range res.Curves {
		var p *plot.Plot
		var err error
		if len(res.Names) == 1 {
			p, err = curvePlot(c, res.Names[0])
			if err == nil {
				err = overlayExact(p, c, res)
			}
		} else {
			p, err = heatPlot(c, res)
		}
		if err != nil {
			return nil, fmt.Errorf("picture of %s: %w", c.Name, err)
		}
		if p == nil {
			continue
		}
		for _, ext := range []string{"svg", "png"} {
			w, err := p.WriterTo(16*vg.Centimeter, 11*vg.Centimeter, ext)
			if err != nil {
				return nil, fmt.Errorf("picture of %s: %w", c.Name, err)
			}
			var buf bytes.Buffer
			if _, err := w.WriteTo(&buf); err != nil {
				return nil, fmt.Errorf("picture of %s: %w", c.Name, err)
			}
			out[c.Name+"."+ext] = buf.Bytes()
		}
	}
	if err := phasePictures(res, out); err != nil {
		return nil, err
	}
	return out, nil
}

func curvePlot(c *indicator.Curve, xname string) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = describe(c)
	p.X.Label.Text = xname
	p.Y.Label.Text = c.Name
	type pt struct{ x, y, e float64 }
	var pts []pt
	for t, pos := range c.Pos {
		if !math.IsNaN(c.Val[t]) && !math.IsInf(c.Val[t], 0) {
			pts = append(pts, pt{pos[0], c.Val[t], c.Err[t]})
		}
	}
	if len(pts) == 0 {
		return nil, nil
	}
	sort.Slice(pts, func(i, j int) bool { return pts[i].x < pts[j].x })
	line := make(plotter.XYs, len(pts))
	band := make(plotter.XYs, 0, 2*len(pts))
	for i, q := range pts {
		line[i] = plotter.XY{X: q.x, Y: q.y}
		band = append(band, plotter.XY{X: q.x, Y: q.y + q.e})
	}
	for i := len(pts) - 1; i >= 0; i-- {
		band = append(band, plotter.XY{X: pts[i].x, Y: pts[i].y - pts[i].e})
	}
	poly, err := plotter.NewPolygon(band)
	if err != nil {
		return nil, err
	}
	poly.Color = bandColor
	poly.LineStyle.Width = 0
	l, s, err := plotter.NewLinePoints(line)
	if err != nil {
		return nil, err
	}
	l.Color = curveColor
	l.Width = vg.Points(1.5)
	s.Color = curveColor
	s.Radius = vg.Points(1.8)
	p.Add(poly, l, s)
	p.Legend.Add(c.Name, l)
	p.Legend.Add("±1 standard error", poly)
	if len(c.Peaks) > 0 {
		pk := make(plotter.XYs, len(c.Peaks))
		for i, q := range c.Peaks {
			pk[i] = plotter.XY{X: q.At[0], Y: q.Height}
		}
		sc, err := plotter.NewScatter(pk)
		if err != nil {
			return nil, err
		}
		sc.Color = peakColor
		sc.Shape = draw.PyramidGlyph{}
		sc.Radius = vg.Points(5)
		p.Add(sc)
		xe := make(plotter.XErrors, len(c.Peaks))
		for i, q := range c.Peaks {
			xe[i].Low, xe[i].High = -q.Err[0], q.Err[0]
		}
		eb, err := plotter.NewXErrorBars(struct {
			plotter.XYer
			plotter.XErrorer
		}{pk, xe})
		if err == nil {
			eb.Color = peakColor
			p.Add(eb)
		}
		p.Legend.Add("peak (position ± error)", sc)
	}
	p.Legend.Top = true
	p.Add(plotter.NewGrid())
	// Leave room above the data for the legend (three lines) so it does not
	// cover the curve or its error band.
	p.Y.Max += 0.3 * (p.Y.Max - p.Y.Min)
	return p, nil
}

// grid is a GridXYZ over the distinct positions of a 2-D curve.
type grid struct {
	xs, ys []float64
	z      [][]float64 // z[r][c]
}

func (g *grid) Dims() (int, int)   { return len(g.xs), len(g.ys) }
func (g *grid) Z(c, r int) float64 { return g.z[r][c] }
func (g *grid) X(c int) float64    { return g.xs[c] }
func (g *grid) Y(r int) float64    { return g.ys[r] }
func distinct(v []float64) []float64 {
	m := map[float64]bool{}
	var out []float64
	for _, x := range v {
		if !m[x] {
			m[x] = true
			out = append(out, x)
		}
	}
	sort.Float64s(out)
	return out
}

func heatPlot(c *indicator.Curve, res *indicator.Result) (*plot.Plot, error) {
	var xs, ys []float64
	for _, p := range c.Pos {
		xs = append(xs, p[0])
		ys = append(ys, p[1])
	}
	g := &grid{xs: distinct(xs), ys: distinct(ys)}
	if len(g.xs) < 2 || len(g.ys) < 2 {
		return nil, nil
	}
	xi := map[float64]int{}
	yi := map[float64]int{}
	for i, x := range g.xs {
		xi[x] = i
	}
	for i, y := range g.ys {
		yi[y] = i
	}
	g.z = make([][]float64, len(g.ys))
	for r := range g.z {
		g.z[r] = make([]float64, len(g.xs))
		for i := range g.z[r] {
			g.z[r][i] = math.NaN()
		}
	}
	for t, p := range c.Pos {
		g.z[yi[p[1]]][xi[p[0]]] = c.Val[t]
	}
	// An outlier-proof scale (log or percentile-clipped, see colourScale)
	// and a monotone-luminance colour map.
	sc := newColourScale(c.Val)
	h := scaledHeat(g, sc)
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s\n%s", describe(c), sc.legend())
	p.X.Label.Text = res.Names[0]
	p.Y.Label.Text = res.Names[1]
	p.Add(h)
	for _, b := range res.Boundaries {
		if b.Indicator != c.Name {
			continue
		}
		xy := make(plotter.XYs, len(b.Points))
		for i, q := range b.Points {
			xy[i] = plotter.XY{X: q[0], Y: q[1]}
		}
		l, s, err := plotter.NewLinePoints(xy)
		if err != nil {
			return nil, err
		}
		col := ridgeA
		if b.Axis == res.Names[1] {
			col = ridgeB
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(2)}
		}
		l.Color = col
		l.Width = vg.Points(2)
		s.Color = col
		s.Radius = vg.Points(2)
		p.Add(l, s)
		p.Legend.Add("boundary (ridge along "+b.Axis+")", l)
	}
	p.Legend.Top = true
	return p, nil
}
