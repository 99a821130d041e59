package scaling

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tidemark/indicator/report"
)

var palette = []color.Color{
	color.RGBA{R: 0x1f, G: 0x4e, B: 0x99, A: 0xff},
	color.RGBA{R: 0xc0, G: 0x30, B: 0x20, A: 0xff},
	color.RGBA{R: 0x17, G: 0x69, B: 0x2b, A: 0xff},
	color.RGBA{R: 0x8a, G: 0x4f, B: 0xb0, A: 0xff},
	color.RGBA{R: 0xd8, G: 0x9b, B: 0x00, A: 0xff},
	color.RGBA{R: 0x00, G: 0x8b, B: 0x8b, A: 0xff},
	color.RGBA{R: 0x55, G: 0x55, B: 0x55, A: 0xff},
}

// Write writes the extrapolation folder dir: summary.json, peaks.svg/.png
// (peak position against L^(−1/ν) with the fits and the extrapolated
// points), collapse-<indicator>.svg/.png (the curves of all sizes against
// (λ − λ_c)·L^(1/ν)) and report.html. It builds the folder next to dir and
// renames it into place; an existing non-empty dir is replaced only with
// force.
func Write(dir string, force bool, res *Result) error {
	if err := report.CheckDir(dir, force); err != nil {
		return err
	}
	files := map[string][]byte{}
	pics := map[string][]byte{}
	p, err := peaksPlot(res)
	if err != nil {
		return fmt.Errorf("picture of the fits: %w", err)
	}
	if err := render(p, "peaks", pics); err != nil {
		return err
	}
	var collapses []string
	for _, e := range res.Estimates {
		p, err := collapsePlot(res, e)
		if err != nil {
			res.Notes = append(res.Notes, fmt.Sprintf("no collapse picture of %s: %v", e.Indicator, err))
			continue
		}
		name := "collapse-" + e.Indicator
		if err := render(p, name, pics); err != nil {
			return err
		}
		collapses = append(collapses, name)
	}
	for n, b := range pics {
		files[n] = b
	}
	var names []string
	for n := range files {
		names = append(names, n)
	}
	names = append(names, "summary.json", "report.html")
	sort.Strings(names)
	res.Files = names
	js, err := json.MarshalIndent(res, "", "  ")
	if err != nil {
		return fmt.Errorf("summary.json: %w", err)
	}
	files["summary.json"] = append(js, '\n')
	if files["report.html"], err = page(res, dir, pics, collapses); err != nil {
		return err
	}
	clean := filepath.Clean(dir)
	tmp, err := os.MkdirTemp(filepath.Dir(clean), "."+filepath.Base(clean)+".tmp-*")
	if err != nil {
		return fmt.Errorf("%s: cannot create temporary folder: %w", dir, err)
	}
	ok := false
	defer func() {
		if !ok {
			os.RemoveAll(tmp)
		}
	}()
	for _, n := range names {
		if err := report.WriteSynced(filepath.Join(tmp, n), files[n]); err != nil {
			return fmt.Errorf("%s: %w", dir, err)
		}
	}
	if err := report.Install(tmp, clean); err != nil {
		return err
	}
	ok = true
	return nil
}

// exactTicks labels gonum's default ticks with enough digits to tell them
// apart (the default labels round 2.25 to "2.2").
type exactTicks struct{}

// Ticks returns the default ticks of [lo, hi], labelled exactly.
func (exactTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'g', 6, 64)
		}
	}
	return ts
}

func render(p *plot.Plot, name string, out map[string][]byte) error {
	p.X.Tick.Marker = exactTicks{}
	p.Y.Tick.Marker = exactTicks{}
	for _, ext := range []string{"svg", "png"} {
		w, err := p.WriterTo(16*vg.Centimeter, 11*vg.Centimeter, ext)
		if err != nil {
			return fmt.Errorf("picture %s: %w", name, err)
		}
		var buf bytes.Buffer
		if _, err := w.WriteTo(&buf); err != nil {
			return fmt.Errorf("picture %s: %w", name, err)
		}
		out[name+"."+ext] = buf.Bytes()
	}
	return nil
}

// peaksPlot draws every indicator's peaks against L^(−1/ν) (each with its
// own ν), the fitted curves down to L = ∞ and λ_c with its error at 0.
func peaksPlot(res *Result) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = "peak positions and their extrapolation to L = ∞"
	p.X.Label.Text = "L^(−1/ν)"
	p.Y.Label.Text = res.Param + " at the peak"
	p.Legend.Top = false
	for i, e := range res.Estimates {
		col := palette[i%len(palette)]
		f := e.fit
		xy := make(plotter.XYs, len(e.Sizes))
		yerr := make(plotter.YErrors, len(e.Sizes))
		xmax := 0.0
		for j, L := range e.Sizes {
			xy[j] = plotter.XY{X: math.Pow(L, -1/f.Nu), Y: e.Peaks[j]}
			yerr[j].Low, yerr[j].High = e.PeakErrs[j], e.PeakErrs[j]
			xmax = math.Max(xmax, xy[j].X)
		}
		sc, err := plotter.NewScatter(xy)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Color = col
		sc.GlyphStyle.Radius = vg.Points(3)
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{xy, yerr})
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color = col
		line := make(plotter.XYs, 0, 101)
		for k := 0; k <= 100; k++ {
			x := xmax * 1.05 * float64(k) / 100
			L := math.Inf(1)
			if x > 0 {
				L = math.Pow(x, -f.Nu)
			}
			line = append(line, plotter.XY{X: x, Y: f.Curve(L)})
		}
		ln, err := plotter.NewLine(line)
		if err != nil {
			return nil, err
		}
		ln.LineStyle.Color = col
		ln.LineStyle.Dashes = []vg.Length{vg.Points(4), vg.Points(2)}
		c := plotter.XYs{{X: 0, Y: f.Value}}
		cp, err := plotter.NewScatter(c)
		if err != nil {
			return nil, err
		}
		cp.GlyphStyle.Color = col
		cp.GlyphStyle.Shape = draw.BoxGlyph{}
		cp.GlyphStyle.Radius = vg.Points(4)
		ce, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{c, plotter.YErrors{{Low: f.Err, High: f.Err}}})
		if err != nil {
			return nil, err
		}
		ce.LineStyle.Color = col
		ce.LineStyle.Width = vg.Points(1.5)
		p.Add(ln, eb, sc, ce, cp)
		p.Legend.Add(fmt.Sprintf("%s: %s_c = %.5g ± %.2g (ν = %.3g)", e.Indicator, res.Param, f.Value, f.Err, f.Nu), sc)
	}
	p.X.Min = 0
	return p, nil
}

// readCurve returns the positions and values of column name of a scan's
// indicators.csv (rows with an empty cell skipped), and the errors of
// column name_err (nil when it is missing or has an empty cell).
func readCurve(dir, param, name string) (x, y, yerr []float64, err error) {
	path := filepath.Join(dir, "indicators.csv")
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, nil, err
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		return nil, nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	if len(recs) < 2 {
		return nil, nil, nil, fmt.Errorf("%s: expected a header and rows, found %d lines", path, len(recs))
	}
	pc, vc, ec := -1, -1, -1
	for i, h := range recs[0] {
		switch h {
		case param:
			pc = i
		case name:
			vc = i
		case name + "_err":
			ec = i
		}
	}
	if pc < 0 || vc < 0 {
		return nil, nil, nil, fmt.Errorf("%s: expected columns %s and %s", path, param, name)
	}
	for _, r := range recs[1:] {
		if r[vc] == "" {
			continue
		}
		a, err1 := strconv.ParseFloat(r[pc], 64)
		v, err2 := strconv.ParseFloat(r[vc], 64)
		if err1 != nil || err2 != nil {
			return nil, nil, nil, fmt.Errorf("%s: expected numbers, found %q, %q", path, r[pc], r[vc])
		}
		x, y = append(x, a), append(y, v)
		if ec >= 0 {
			e, err := strconv.ParseFloat(r[ec], 64)
			if err != nil {
				ec = -1
				continue
			}
			yerr = append(yerr, e)
		}
	}
	if ec < 0 {
		yerr = nil
	}
	return x, y, yerr, nil
}

// collapsePlot draws one indicator's curves of all scans against
// (λ − λ_c)·L^(1/ν), each divided by its own maximum.
func collapsePlot(res *Result, e Estimate) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s: data collapse with %s_c = %.5g, ν = %.3g", e.Indicator, res.Param, e.Value, e.Nu)
	p.X.Label.Text = fmt.Sprintf("(%s − %s_c)·L^(1/ν)", res.Param, res.Param)
	p.Y.Label.Text = e.Indicator + " / its maximum"
	p.Legend.Top = true
	n := 0
	for i, sc := range res.scans {
		if _, ok := sc.Peaks[e.Indicator]; !ok {
			continue
		}
		x, y, _, err := readCurve(sc.Dir, res.Param, e.Indicator)
		if err != nil {
			return nil, err
		}
		top := math.Inf(-1)
		for _, v := range y {
			top = math.Max(top, v)
		}
		if !(top > 0) {
			continue
		}
		xy := make(plotter.XYs, len(x))
		for j := range x {
			xy[j] = plotter.XY{X: (x[j] - e.Value) * math.Pow(sc.Size, 1/e.Nu), Y: y[j] / top}
		}
		ln, err := plotter.NewLine(xy)
		if err != nil {
			return nil, err
		}
		ln.LineStyle.Color = palette[i%len(palette)]
		ln.LineStyle.Width = vg.Points(1.3)
		p.Add(ln)
		p.Legend.Add(fmt.Sprintf("L = %g (%s)", sc.Size, sc.Source), ln)
		n++
	}
	if n == 0 {
		return nil, fmt.Errorf("no curve with a positive maximum")
	}
	return p, nil
}
