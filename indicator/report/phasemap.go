package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tidemark/indicator"
	"tidemark/indicator/phases"
)

var (
	boundaryColor  = color.RGBA{R: 0x00, G: 0xb4, B: 0xff, A: 0xff}
	referenceColor = color.RGBA{R: 0xff, G: 0x40, B: 0xc0, A: 0xff}
)

// colourScale is a colour scale that survives outliers: values are mapped
// through f and clipped to [Lo, Hi], the 2nd and 98th percentiles of the
// mapped finite values, so that one extreme cell cannot darken the rest.
// A map whose positive values span more than a factor 20 between those
// percentiles is shown on a log10 scale.
type colourScale struct {
	Log    bool
	Lo, Hi float64
}

func newColourScale(v []float64) colourScale {
	var fin, pos []float64
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			continue
		}
		fin = append(fin, x)
		if x > 0 {
			pos = append(pos, math.Log10(x))
		}
	}
	s := colourScale{}
	if len(fin) == 0 {
		return colourScale{Lo: 0, Hi: 1}
	}
	if len(pos) == len(fin) {
		lo, hi := phases.Quantile(pos, 0.02), phases.Quantile(pos, 0.98)
		if hi-lo > math.Log10(20) {
			s = colourScale{Log: true, Lo: lo, Hi: hi}
		}
	}
	if !s.Log {
		s.Lo, s.Hi = phases.Quantile(fin, 0.02), phases.Quantile(fin, 0.98)
	}
	if !(s.Hi > s.Lo) {
		s.Hi = s.Lo + math.Max(1e-12, math.Abs(s.Lo)*1e-6)
	}
	return s
}

// value maps x onto the scale, clipped (NaN stays NaN; a non-positive value
// on a log scale goes to the bottom).
func (s colourScale) value(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if s.Log {
		if !(x > 0) {
			return s.Lo
		}
		x = math.Log10(x)
	}
	return math.Max(s.Lo, math.Min(s.Hi, x))
}

// legend states the scale in words.
func (s colourScale) legend() string {
	if s.Log {
		return fmt.Sprintf("colour: log10 scale from %.3g (dark) to %.3g (bright), clipped at the 2nd/98th percentiles", math.Pow(10, s.Lo), math.Pow(10, s.Hi))
	}
	return fmt.Sprintf("colour: linear scale from %.4g (dark) to %.4g (bright), clipped at the 2nd/98th percentiles", s.Lo, s.Hi)
}

// heatRange fills g.z through the colour scale and returns a heat map
// drawn with a monotone-luminance colour map (Moreland's extended black
// body: its lightness rises from end to end, so the map reads in grey).
func scaledHeat(g *grid, s colourScale) *plotter.HeatMap {
	for r := range g.z {
		for c := range g.z[r] {
			g.z[r][c] = s.value(g.z[r][c])
		}
	}
	cm := moreland.ExtendedBlackBody()
	cm.SetMin(s.Lo)
	cm.SetMax(s.Hi)
	h := plotter.NewHeatMap(g, cm.Palette(255))
	h.Min, h.Max = s.Lo, s.Hi
	h.NaN = color.Gray{Y: 0xcc}
	return h
}

// phasePictures renders one picture per phase map, phases_<indicator>.svg
// and .png: the boundary strength on the outlier-proof scale, the phases'
// numbers at their centres, the boundaries with ±1 standard-error bars and
// the reference lines. The legend sits below the plot, outside the data.
func phasePictures(res *indicator.Result, out map[string][]byte) error {
	pd := res.Phases
	if pd == nil {
		return nil
	}
	for _, m := range pd.Maps {
		p, err := phasePlot(res, m)
		if err != nil {
			return fmt.Errorf("phase picture of %s: %w", m.Indicator, err)
		}
		for _, ext := range []string{"svg", "png"} {
			w, err := p.WriterTo(16*vg.Centimeter, 15*vg.Centimeter, ext)
			if err != nil {
				return fmt.Errorf("phase picture of %s: %w", m.Indicator, err)
			}
			var buf bytes.Buffer
			if _, err := w.WriteTo(&buf); err != nil {
				return fmt.Errorf("phase picture of %s: %w", m.Indicator, err)
			}
			out["phases_"+m.Indicator+"."+ext] = buf.Bytes()
		}
	}
	return nil
}

func phasePlot(res *indicator.Result, m indicator.PhaseMap) (*plot.Plot, error) {
	lo := res.Layout
	x0, x1 := lo.Axes[0], lo.Axes[1]
	g := &grid{xs: x0, ys: x1, z: make([][]float64, len(x1))}
	for r := range g.z {
		g.z[r] = make([]float64, len(x0))
	}
	for k, v := range m.Strength {
		g.z[k%len(x1)][k/len(x1)] = v
	}
	s := newColourScale(m.Strength)
	p := plot.New()
	key := "numbers: phases; cyan line: boundary between phases (bars ±1 s.e.)"
	if len(res.Phases.References) > 0 {
		key += "; dashed magenta: reference"
	}
	p.Title.Text = fmt.Sprintf("%s: %d phase(s)\n%s\n%s\n%s", m.Indicator, m.Phases.Count, m.Invariant, s.legend(), key)
	p.Title.TextStyle.Font.Size = vg.Points(9)
	p.X.Label.Text = lo.Names[0]
	p.Y.Label.Text = lo.Names[1]
	p.Add(scaledHeat(g, s))
	// Phase numbers at the grid point nearest each phase's centroid.
	var lxy plotter.XYs
	var ltxt []string
	for ph := 0; ph < m.Phases.Count; ph++ {
		var cx, cy float64
		var ks []int
		for k, l := range m.Phases.Labels {
			if l == ph {
				ks = append(ks, k)
				cx += x0[k/len(x1)]
				cy += x1[k%len(x1)]
			}
		}
		cx /= float64(len(ks))
		cy /= float64(len(ks))
		best, bd := ks[0], math.Inf(1)
		for _, k := range ks {
			dx := (x0[k/len(x1)] - cx) / (x0[len(x0)-1] - x0[0])
			dy := (x1[k%len(x1)] - cy) / (x1[len(x1)-1] - x1[0])
			if d := math.Hypot(dx, dy); d < bd {
				best, bd = k, d
			}
		}
		lxy = append(lxy, plotter.XY{X: x0[best/len(x1)], Y: x1[best%len(x1)]})
		ltxt = append(ltxt, fmt.Sprintf("%d", ph+1))
	}
	labels, err := plotter.NewLabels(plotter.XYLabels{XYs: lxy, Labels: ltxt})
	if err != nil {
		return nil, err
	}
	for i := range labels.TextStyle {
		labels.TextStyle[i].Color = color.RGBA{R: 0x20, G: 0xd0, B: 0x40, A: 0xff}
		labels.TextStyle[i].Font.Size = vg.Points(16)
		labels.TextStyle[i].XAlign = draw.XCenter
		labels.TextStyle[i].YAlign = draw.YCenter
	}
	p.Add(labels)
	for _, b := range m.Boundaries {
		xy := make(plotter.XYs, len(b.Points))
		xe := make(plotter.XErrors, len(b.Points))
		ye := make(plotter.YErrors, len(b.Points))
		for i, q := range b.Points {
			xy[i] = plotter.XY{X: q[0], Y: q[1]}
			xe[i] = struct{ Low, High float64 }{b.Err[i][0], b.Err[i][0]}
			ye[i] = struct{ Low, High float64 }{b.Err[i][1], b.Err[i][1]}
		}
		l, sc, err := plotter.NewLinePoints(xy)
		if err != nil {
			return nil, err
		}
		l.Color, l.Width = boundaryColor, vg.Points(2)
		sc.Color, sc.Radius = boundaryColor, vg.Points(2)
		eb := struct {
			plotter.XYs
			plotter.XErrors
			plotter.YErrors
		}{xy, xe, ye}
		xb, err := plotter.NewXErrorBars(eb)
		if err != nil {
			return nil, err
		}
		yb, err := plotter.NewYErrorBars(eb)
		if err != nil {
			return nil, err
		}
		xb.Color, yb.Color = boundaryColor, boundaryColor
		p.Add(l, sc, xb, yb)
	}
	for _, c := range res.Phases.References {
		xy := make(plotter.XYs, len(c.Points))
		for i, q := range c.Points {
			xy[i] = plotter.XY{X: q[0], Y: q[1]}
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return nil, err
		}
		l.Color, l.Width = referenceColor, vg.Points(1.5)
		l.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
		p.Add(l)
	}
	// The heat map's extent; references outside it do not widen the view.
	dx := (x0[len(x0)-1] - x0[0]) / float64(2*(len(x0)-1))
	dy := (x1[len(x1)-1] - x1[0]) / float64(2*(len(x1)-1))
	p.X.Min, p.X.Max = x0[0]-dx, x0[len(x0)-1]+dx
	p.Y.Min, p.Y.Max = x1[0]-dy, x1[len(x1)-1]+dy
	// The key is in the title, above the axes: nothing covers the data.
	return p, nil
}

// PhasesSummary is the "phases" object of summary.json.
type PhasesSummary struct {
	// Count and Labels are those of the primary map (fisher when
	// available): the number of phases and a phase label per grid point of
	// the scanned grid, in grid order (the last parameter varying fastest).
	Count  int   `json:"count"`
	Labels []int `json:"labels"`
	// Indicator names the primary map.
	Indicator string `json:"indicator"`
	// Scale is the per-axis unit of the metric.
	Scale []float64 `json:"metric_scale"`
	// Maps lists every indicator's map.
	Maps []PhaseMapSummary `json:"maps"`
	// References are the reference lines drawn.
	References []phases.Curve `json:"references,omitempty"`
}

// PhaseMapSummary is one indicator's phases and boundaries.
type PhaseMapSummary struct {
	Indicator  string            `json:"indicator"`
	Invariant  string            `json:"invariant"`
	Count      int               `json:"count"`
	Labels     []int             `json:"labels"`
	Boundaries []phases.Boundary `json:"boundaries"`
	Passes     []phases.Pass     `json:"passes"`
	// Refined lists the points a 2-D refinement inserted near the
	// boundaries, as [x, y, strength].
	Refined [][3]float64 `json:"refined,omitempty"`
}

// PhaseBoundary is an entry of summary.json's "boundaries" for a boundary
// between two phases: points as [x, y] pairs in the order of the dataset's
// parameters, with per-axis errors.
type PhaseBoundary struct {
	Indicator string       `json:"indicator"`
	Between   [2]int       `json:"between"`
	Points    [][2]float64 `json:"points"`
	Err       [][2]float64 `json:"err"`
	Along     []string     `json:"located_along"`
}

func phasesSummary(res *indicator.Result) *PhasesSummary {
	pd := res.Phases
	if pd == nil || pd.Primary < 0 {
		return nil
	}
	pm := pd.Maps[pd.Primary]
	s := &PhasesSummary{Count: pm.Phases.Count, Labels: pm.Phases.Labels, Indicator: pm.Indicator, Scale: pd.Scale, References: pd.References}
	for _, m := range pd.Maps {
		ms := PhaseMapSummary{Indicator: m.Indicator, Invariant: m.Invariant, Count: m.Phases.Count, Labels: m.Phases.Labels, Boundaries: nonNilB(m.Boundaries), Passes: m.Phases.Passes}
		for i, p := range m.Refined {
			ms.Refined = append(ms.Refined, [3]float64{p[0], p[1], m.RefinedStrength[i]})
		}
		s.Maps = append(s.Maps, ms)
	}
	return s
}

func nonNilB(b []phases.Boundary) []phases.Boundary {
	if b == nil {
		return []phases.Boundary{}
	}
	return b
}

// phaseBoundaries returns the primary map's boundaries for summary.json's
// "boundaries" list.
func phaseBoundaries(res *indicator.Result) []PhaseBoundary {
	pd := res.Phases
	if pd == nil || pd.Primary < 0 {
		return nil
	}
	pm := pd.Maps[pd.Primary]
	var out []PhaseBoundary
	for _, b := range pm.Boundaries {
		pb := PhaseBoundary{Indicator: "phases:" + pm.Indicator, Between: b.Between, Points: b.Points, Err: b.Err}
		for _, a := range b.Along {
			pb.Along = append(pb.Along, res.Names[a])
		}
		out = append(out, pb)
	}
	return out
}

// phaseTable is the HTML table of the primary map's boundary points.
type phaseRow struct {
	Between string
	Point   string
}

func phaseRows(res *indicator.Result) []phaseRow {
	var rows []phaseRow
	for _, b := range phaseBoundaries(res) {
		for i, p := range b.Points {
			rows = append(rows, phaseRow{Between: fmt.Sprintf("%d | %d", b.Between[0]+1, b.Between[1]+1), Point: fmtPoint(res.Names, p[:], b.Err[i][:])})
		}
	}
	return rows
}

// phaseMapNames lists the indicators with a phase picture, primary first.
func phaseMapNames(res *indicator.Result) []string {
	pd := res.Phases
	if pd == nil {
		return nil
	}
	var out []string
	for i, m := range pd.Maps {
		if i == pd.Primary {
			out = append([]string{m.Indicator}, out...)
		} else {
			out = append(out, m.Indicator)
		}
	}
	return out
}

// boundaryList is summary.json's "boundaries": the boundaries between
// phases of the primary map first (with "between"), then the ridge
// polylines of the per-curve maps (with "along").
func boundaryList(res *indicator.Result) []any {
	var out []any
	for _, b := range phaseBoundaries(res) {
		out = append(out, b)
	}
	for _, b := range res.Boundaries {
		out = append(out, b)
	}
	return out
}

var phaseTemplate = template.Must(template.New("phases").Parse(`<h2>Phase diagram</h2>
<p>{{.Count}} phase(s) from the {{.Indicator}} map ({{.Invariant}}). The grid is divided into regions separated by the ridges of the boundary strength (a watershed of its logarithm, with neighbouring regions merged unless the ridge between them stands at least twice as high as the higher of their floors and three standard errors above the noise); the boundaries are located between grid points on every grid line that crosses them{{if .References}}, with reference lines dashed{{end}}.</p>
{{range .Figures}}<figure>{{.SVG}}<figcaption>{{.Caption}} (<code>{{.Name}}</code>)</figcaption></figure>
{{end}}{{with .Rows}}<table>
<tr><th>between phases</th><th>boundary point (± 1 standard error along its grid line)</th></tr>
{{range .}}<tr><td>{{.Between}}</td><td class="num">{{.Point}}</td></tr>
{{end}}</table>{{end}}
`))

// phaseSection renders the 2-D section of report.html (empty without a
// phase diagram).
func phaseSection(res *indicator.Result, pics map[string][]byte) (template.HTML, error) {
	pd := res.Phases
	if pd == nil || pd.Primary < 0 {
		return "", nil
	}
	pm := pd.Maps[pd.Primary]
	d := struct {
		Count                int
		Indicator, Invariant string
		References           bool
		Figures              []pageFigure
		Rows                 []phaseRow
	}{Count: pm.Phases.Count, Indicator: pm.Indicator, Invariant: pm.Invariant, References: len(pd.References) > 0, Rows: phaseRows(res)}
	for _, n := range phaseMapNames(res) {
		name := "phases_" + n + ".svg"
		if b, ok := pics[name]; ok {
			d.Figures = append(d.Figures, pageFigure{Name: name, Caption: "phases and boundaries from " + n, SVG: inlineSVG(b)})
		}
	}
	var buf bytes.Buffer
	if err := phaseTemplate.Execute(&buf, d); err != nil {
		return "", fmt.Errorf("report.html phase section: %w", err)
	}
	return template.HTML(buf.String()), nil
}
