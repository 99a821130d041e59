package report

import (
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"tidemark/indicator"
)

var exactColor = color.RGBA{R: 0x10, G: 0x10, B: 0x10, A: 0xff}

// overlayExact draws the exact scan's curve of the same name (from
// Result.Exact) on a 1-D picture, dashed and black, and raises the top of
// the plot so that the legend, at the top, stays above both curves.
func overlayExact(p *plot.Plot, c *indicator.Curve, res *indicator.Result) error {
	if p == nil || res.Exact == nil {
		return nil
	}
	var ref *indicator.Curve
	for _, e := range res.Exact.Curves {
		if e.Name == c.Name {
			ref = e
		}
	}
	if ref == nil {
		return nil
	}
	var xy plotter.XYs
	for t, pos := range ref.Pos {
		if v := ref.Val[t]; !math.IsNaN(v) && !math.IsInf(v, 0) {
			xy = append(xy, plotter.XY{X: pos[0], Y: v})
		}
	}
	if len(xy) == 0 {
		return nil
	}
	sort.Slice(xy, func(i, j int) bool { return xy[i].X < xy[j].X })
	l, err := plotter.NewLine(xy)
	if err != nil {
		return err
	}
	l.Color, l.Width = exactColor, vg.Points(1.2)
	l.Dashes = []vg.Length{vg.Points(4), vg.Points(2)}
	p.Add(l)
	p.Legend.Add(c.Name+", exact density (same snapshots)", l)
	// Headroom for up to five legend lines above the highest value of
	// either curve (and its error band).
	hi := math.Inf(-1)
	lo := math.Inf(1)
	for _, cv := range []*indicator.Curve{c, ref} {
		for t, v := range cv.Val {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				hi = math.Max(hi, v+cv.Err[t])
				lo = math.Min(lo, v-cv.Err[t])
			}
		}
	}
	for _, pk := range c.Peaks {
		hi = math.Max(hi, pk.Height)
	}
	lo = math.Min(lo, p.Y.Min)
	p.Y.Min = lo
	p.Y.Max = hi + 0.5*(hi-lo)
	return nil
}
