package report

import (
	"bytes"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"tidemark/data"
	"tidemark/indicator"
)

// Page is what report.html shows beyond the scan itself: the dataset, the
// models and checks against exact results. Write builds one from Info.Data
// and Info.Models when Info.Page is nil.
type Page struct {
	// Title heads the page; empty means "tidemark scan".
	Title string
	// Lead is an opening paragraph (plain text), e.g. the demo's conclusion.
	Lead string
	// Dataset describes the scanned data (nil: not shown).
	Dataset *DatasetInfo
	// Models describe the trained models of a model scan.
	Models []ModelInfo
	// Checks compare estimates with exact references.
	Checks []Check
	// Problems lists what could not be summarised (a file that failed to
	// load), shown on the page instead of the missing section.
	Problems []string
}

// DatasetInfo summarises a dataset for report.html.
type DatasetInfo struct {
	// Path is the file name as given.
	Path string
	// Snapshots, Sites and Alphabet are M, N and q.
	Snapshots, Sites, Alphabet int
	// Lattice is the lattice shape (row-major).
	Lattice []int
	// Params are the parameter names; Points the number of grid points;
	// Axes describe each axis ("T: 14 values from 1.6 to 3.2").
	Params []string
	Points int
	Axes   []string
	// PerPoint is the range of snapshots per grid point ("600" or "20–40").
	PerPoint string
	// Generator is meta.source.generator ("ising", "imported", …).
	Generator string
}

// ModelInfo summarises a trained model for report.html.
type ModelInfo struct {
	// Path is the checkpoint file name as given.
	Path string
	// Architecture describes the network in one line.
	Architecture string
	// Params is the number of trainable values.
	Params int
	// Epochs is the number of completed epochs; BestEpoch the epoch whose
	// weights are used; Stopped why training ended.
	Epochs, BestEpoch int
	Stopped           string
	// BestVal is the best validation NLL in bits per site and BestValErr
	// its standard error (0: not recorded); HeldOut the NLL of held-out grid
	// points (nil when there were none).
	BestVal, BestValErr float64
	HeldOut             *float64
	// Curve holds the training and validation NLL (bits per site) per epoch.
	Curve []EpochPoint
}

// EpochPoint is one epoch of a training curve, in bits per site.
type EpochPoint struct {
	Epoch      int
	Train, Val float64
}

// Check compares one estimate with an exact reference.
type Check struct {
	// Quantity names what is estimated.
	Quantity string
	// Estimate and Err are the estimate and its standard error.
	Estimate, Err float64
	// Reference is the exact value and Source where it comes from.
	Reference float64
	Source    string
	// RelDiff is (Estimate − Reference)/Reference.
	RelDiff float64
}

// DatasetSummary describes ds, read from path, for report.html.
func DatasetSummary(path string, ds *data.Dataset) *DatasetInfo {
	d := &DatasetInfo{
		Path: path, Snapshots: ds.M, Sites: ds.N, Alphabet: ds.Alphabet(),
		Lattice: ds.Meta.Lattice, Params: ds.Meta.ParamNames, Generator: ds.Meta.Generator(),
	}
	if ds.D == 0 {
		return d
	}
	g := data.NewGrid(ds)
	d.Points = g.K()
	lo, hi := math.MaxInt, 0
	for _, idx := range g.Index {
		lo, hi = min(lo, len(idx)), max(hi, len(idx))
	}
	if lo == hi {
		d.PerPoint = fmt.Sprint(lo)
	} else {
		d.PerPoint = fmt.Sprintf("%d–%d", lo, hi)
	}
	if g.Product {
		for i, ax := range g.Axes {
			d.Axes = append(d.Axes, fmt.Sprintf("%s: %d values from %.6g to %.6g", g.Names[i], len(ax), ax[0], ax[len(ax)-1]))
		}
	}
	return d
}

// inlineSVG returns an SVG document as an element to place in HTML: without
// the XML declaration and comments before <svg, and scaled by CSS.
func inlineSVG(b []byte) template.HTML {
	i := bytes.Index(b, []byte("<svg"))
	if i < 0 {
		return ""
	}
	return template.HTML(b[i:])
}

// trainingSVG draws the training and validation NLL per epoch as an inline
// SVG line chart.
func trainingSVG(curve []EpochPoint) template.HTML {
	if len(curve) == 0 {
		return ""
	}
	const W, H = 640.0, 300.0
	const left, right, top, bottom = 70.0, 20.0, 20.0, 45.0
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, e := range curve {
		for _, v := range []float64{e.Train, e.Val} {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	if math.IsInf(lo, 0) {
		return ""
	}
	if !(hi > lo) {
		lo, hi = lo-0.01, hi+0.01
	}
	pad := 0.05 * (hi - lo)
	lo, hi = lo-pad, hi+pad
	e0, e1 := float64(curve[0].Epoch), float64(curve[len(curve)-1].Epoch)
	if e1 == e0 {
		e0, e1 = e0-1, e1+1
	}
	x := func(e float64) float64 { return left + (e-e0)/(e1-e0)*(W-left-right) }
	y := func(v float64) float64 { return top + (hi-v)/(hi-lo)*(H-top-bottom) }
	var b strings.Builder
	fmt.Fprintf(&b, `<svg viewBox="0 0 %g %g" class="chart" role="img" aria-label="training curves" xmlns="http://www.w3.org/2000/svg">`, W, H)
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="%g" height="%g" fill="#fff" stroke="#999"/>`, left, top, W-left-right, H-top-bottom)
	for _, t := range niceTicks(lo, hi, 5) {
		fmt.Fprintf(&b, `<line x1="%g" x2="%g" y1="%.2f" y2="%.2f" stroke="#e3e3e3"/>`, left, W-right, y(t), y(t))
		fmt.Fprintf(&b, `<text x="%g" y="%.2f" text-anchor="end" font-size="12" fill="#333">%s</text>`, left-6, y(t)+4, trimFloat(t))
	}
	for _, t := range niceTicks(e0, e1, 8) {
		if t != math.Trunc(t) {
			continue
		}
		fmt.Fprintf(&b, `<line x1="%.2f" x2="%.2f" y1="%g" y2="%g" stroke="#999"/>`, x(t), x(t), H-bottom, H-bottom+5)
		fmt.Fprintf(&b, `<text x="%.2f" y="%g" text-anchor="middle" font-size="12" fill="#333">%s</text>`, x(t), H-bottom+19, trimFloat(t))
	}
	fmt.Fprintf(&b, `<text x="%g" y="%g" text-anchor="middle" font-size="13" fill="#222">epoch</text>`, (left+W-right)/2, H-6)
	fmt.Fprintf(&b, `<text transform="translate(16 %g) rotate(-90)" text-anchor="middle" font-size="13" fill="#222">NLL (bits per site)</text>`, (top+H-bottom)/2)
	line := func(get func(EpochPoint) float64, col, dash string) {
		var pts []string
		for _, e := range curve {
			v := get(e)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			pts = append(pts, fmt.Sprintf("%.2f,%.2f", x(float64(e.Epoch)), y(v)))
		}
		fmt.Fprintf(&b, `<polyline fill="none" stroke="%s" stroke-width="2" stroke-dasharray="%s" points="%s"/>`, col, dash, strings.Join(pts, " "))
		for _, p := range pts {
			xy := strings.Split(p, ",")
			fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="2.5" fill="%s"/>`, xy[0], xy[1], col)
		}
	}
	line(func(e EpochPoint) float64 { return e.Train }, "#1f4e99", "none")
	line(func(e EpochPoint) float64 { return e.Val }, "#c03020", "6 3")
	lx := W - right - 190
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="180" height="46" fill="#fff" stroke="#ccc"/>`, lx, top+8)
	fmt.Fprintf(&b, `<line x1="%g" x2="%g" y1="%g" y2="%g" stroke="#1f4e99" stroke-width="2"/><text x="%g" y="%g" font-size="12" fill="#222">training (epoch mean)</text>`, lx+8, lx+38, top+23, top+23, lx+46, top+27)
	fmt.Fprintf(&b, `<line x1="%g" x2="%g" y1="%g" y2="%g" stroke="#c03020" stroke-width="2" stroke-dasharray="6 3"/><text x="%g" y="%g" font-size="12" fill="#222">validation</text>`, lx+8, lx+38, top+41, top+41, lx+46, top+45)
	b.WriteString(`</svg>`)
	return template.HTML(b.String())
}

// niceTicks returns about n round tick values in [lo, hi].
func niceTicks(lo, hi float64, n int) []float64 {
	span := hi - lo
	if !(span > 0) {
		return []float64{lo}
	}
	raw := span / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{1, 2, 5, 10} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	var out []float64
	for t := math.Ceil(lo/step) * step; t <= hi+1e-9*span; t += step {
		out = append(out, math.Round(t/step)*step)
	}
	return out
}

func trimFloat(v float64) string { return fmt.Sprintf("%.4g", v) }

// pagePeak is one row of the peak table.
type pagePeak struct {
	Curve, What, At, Height, Noise string
}

// pageFigure is one picture of the page.
type pageFigure struct {
	Name, Caption string
	SVG           template.HTML
}

type pageData struct {
	*Page
	Source, SourceNote string
	ExactSumsNote      bool
	Params             string
	GridPoints         int
	Scanned            int
	Bootstrap          int
	Sources            int
	Peaks              []pagePeak
	Figures            []pageFigure
	Notes              []string
	Zoom               []string
	Caution            string
	ErrorsWarning      string
	Files              []string
	TrainCurves        []template.HTML
	Phases             template.HTML
}

func fmtPoint(names []string, at, err []float64) string {
	parts := make([]string, len(at))
	for i, v := range at {
		if i < len(err) && err[i] > 0 {
			parts[i] = fmt.Sprintf("%s = %.5g ± %.2g", names[i], v, err[i])
		} else {
			parts[i] = fmt.Sprintf("%s = %.5g", names[i], v)
		}
	}
	return strings.Join(parts, ", ")
}

// HTML returns report.html for a scan: a self-contained page (inline SVG
// and CSS, no scripts, no network) with the dataset and model summaries,
// training curves, every picture in pics (<name>.svg), the peak table with
// errors, the checks against exact results and the caution.
func HTML(res *indicator.Result, sum *Summary, pics map[string][]byte, pg *Page) ([]byte, error) {
	if pg == nil {
		pg = &Page{}
	}
	var err error
	d := pageData{
		Page: pg, Source: sum.Source, Params: strings.Join(res.Names, ", "),
		GridPoints: res.Data.K(), Scanned: res.Layout.K(), Bootstrap: res.Bootstrap, Sources: res.Sources,
		Notes: res.Notes, Caution: indicator.Caution, Files: sum.Files, ExactSumsNote: res.ExactSums,
	}
	if d.Title == "" {
		d.Title = "tidemark scan"
	}
	switch sum.Source {
	case "exact":
		d.SourceNote = "The density is exact (the generator's own probabilities), so the curves carry no model error; their errors come from the finite number of snapshots only."
		if res.ExactSums {
			d.SourceNote = "The density is exact and the expectations are exact sums over all states: the curves are exact for this system."
		}
	case "histogram":
		d.SourceNote = "The density is the empirical histogram of the snapshots at each grid point; it is only meaningful for systems small enough that snapshots repeat."
	case "model":
		d.SourceNote = "The density is the trained model. Its indicators are only as good as its fit: compare the validation and held-out likelihoods, and run check where an exact reference exists."
		switch {
		case !sum.Errors.ModelError:
			d.ErrorsWarning = "With one model, " + SingleModelWarning + "; " + CalibrationNote + "."
		case sum.Errors.UnseenShift && sum.Errors.EnsembleMembers == 1:
			d.ErrorsWarning = "With one model, " + UnseenStatement + ", but " + UnseenBiasWarning + "; " + CalibrationNote + "."
		}
	}
	for _, c := range res.Curves {
		what := strings.TrimPrefix(describe(c), c.Name+": ")
		if len(c.Lines) == 0 {
			continue
		}
		if len(c.Peaks) == 0 {
			d.Peaks = append(d.Peaks, pagePeak{Curve: c.Name, What: what, At: "no peak above the noise"})
			continue
		}
		for _, pk := range c.Peaks {
			h := fmt.Sprintf("%.4g", pk.Height)
			if pk.HeightErr > 0 {
				h += fmt.Sprintf(" ± %.2g", pk.HeightErr)
			}
			noise := "not tested (no errors)"
			switch {
			case res.ExactSums:
				noise = "exact, no noise"
			case pk.Tested:
				noise = "yes"
			}
			d.Peaks = append(d.Peaks, pagePeak{Curve: c.Name, What: what, At: fmtPoint(res.Names, pk.At, pk.Err), Height: h, Noise: noise})
		}
	}
	for _, z := range sum.Zoom {
		names := make([]string, 0, len(z.Indicators))
		for n := range z.Indicators {
			names = append(names, n)
		}
		sort.Strings(names)
		for _, n := range names {
			for _, pk := range z.Indicators[n].Peaks {
				d.Zoom = append(d.Zoom, fmt.Sprintf("zoom around %s (%d points of %s from %.6g to %.6g): %s peak at %s",
					data.FormatPoint(res.Names, z.Around), z.Points, z.Axis, z.From, z.To, n, fmtPoint(res.Names, pk.At, pk.Err)))
			}
		}
	}
	refined := sum.Grid.Refine
	if sum.Grid.Scanned == sum.Grid.Points {
		refined = 1 // a 2-D refinement adds points near the boundaries only, not to the curves
	}
	for _, c := range res.Curves {
		b, ok := pics[c.Name+".svg"]
		if !ok {
			continue
		}
		d.Figures = append(d.Figures, pageFigure{Name: c.Name + ".svg", Caption: describe(c) + refinedNote(c, refined), SVG: inlineSVG(b)})
	}
	if d.Phases, err = phaseSection(res, pics); err != nil {
		return nil, err
	}
	for _, m := range pg.Models {
		d.TrainCurves = append(d.TrainCurves, trainingSVG(m.Curve))
	}
	var buf bytes.Buffer
	if err := pageTemplate.Execute(&buf, d); err != nil {
		return nil, fmt.Errorf("report.html: %w", err)
	}
	return buf.Bytes(), nil
}

// Install moves the finished folder tmp to dst, replacing an existing dst
// only after tmp is complete (the old one is moved aside, then removed).
func Install(tmp, dst string) error {
	clean := filepath.Clean(dst)
	parent := filepath.Dir(clean)
	if err := os.Chmod(tmp, 0o755); err != nil {
		return fmt.Errorf("%s: %w", dst, err)
	}
	var old string
	if _, err := os.Lstat(clean); err == nil {
		old = filepath.Join(parent, "."+filepath.Base(clean)+".old-"+filepath.Base(tmp))
		if err := os.Rename(clean, old); err != nil {
			return fmt.Errorf("%s: cannot move the existing folder aside: %w", dst, err)
		}
	}
	if err := os.Rename(tmp, clean); err != nil {
		if old != "" {
			os.Rename(old, clean)
		}
		return fmt.Errorf("%s: %w", dst, err)
	}
	if old != "" {
		os.RemoveAll(old)
	}
	if d, err := os.Open(parent); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

var pageTemplate = template.Must(template.New("report").Funcs(template.FuncMap{
	"pct":  func(v float64) string { return fmt.Sprintf("%+.2f %%", 100*v) },
	"num":  func(v float64) string { return fmt.Sprintf("%.5g", v) },
	"err":  func(v float64) string { return fmt.Sprintf("%.2g", v) },
	"bits": func(v float64) string { return fmt.Sprintf("%.5f", v) },
	"lat": func(l []int) string {
		s := make([]string, len(l))
		for i, v := range l {
			s[i] = fmt.Sprint(v)
		}
		return strings.Join(s, " × ")
	},
	"inc": func(i int) int { return i + 1 },
}).Parse(pageHTML))

// Style is the CSS of report.html, for other pages of tidemark's output to
// look the same.
const Style = `body { margin: 0; background: #f4f2ee; color: #1d1d1d; font: 16px/1.5 Georgia, "DejaVu Serif", serif; }
main { max-width: 60rem; margin: 0 auto; padding: 1.5rem 2rem 3rem; background: #fff; border-left: 1px solid #ddd8cf; border-right: 1px solid #ddd8cf; }
h1 { font-size: 1.9rem; margin: 0.4rem 0 0.8rem; color: #123a73; border-bottom: 3px solid #123a73; padding-bottom: 0.3rem; }
h2 { font-size: 1.3rem; margin: 2rem 0 0.6rem; color: #123a73; border-bottom: 1px solid #cfd8e6; }
p.lead { font-size: 1.08rem; }
.caution { background: #fff4d6; border-left: 6px solid #d89b00; padding: 0.7rem 1rem; margin: 1rem 0; }
.caution strong { color: #7a5200; }
table { border-collapse: collapse; width: 100%; margin: 0.5rem 0 1rem; font: 14px/1.4 "DejaVu Sans", Verdana, sans-serif; }
th, td { text-align: left; padding: 0.35rem 0.6rem; border-bottom: 1px solid #e4e4e4; vertical-align: top; }
th { background: #eef2f8; color: #123a73; font-weight: 600; }
table.kv th { width: 14rem; background: #f6f7f9; }
td.num { font-family: "DejaVu Sans Mono", monospace; white-space: nowrap; }
.good { color: #17692b; font-weight: 600; }
.warn { color: #a33a00; font-weight: 600; }
figure { margin: 1rem 0 1.5rem; padding: 0.5rem; border: 1px solid #e2e2e2; background: #fcfcfc; }
figure svg { display: block; width: 100%; height: auto; max-width: 46rem; margin: 0 auto; }
figcaption { font: 13px/1.4 "DejaVu Sans", Verdana, sans-serif; color: #444; margin-top: 0.3rem; text-align: center; }
ul.notes li { margin-bottom: 0.3rem; }
code { font-family: "DejaVu Sans Mono", monospace; font-size: 0.92em; background: #f1f1f1; padding: 0 0.2em; }
footer { margin-top: 2rem; font: 13px/1.4 "DejaVu Sans", Verdana, sans-serif; color: #666; }
`

// InlineSVG returns an SVG document as an element to place in a page styled
// with Style.
func InlineSVG(b []byte) template.HTML { return inlineSVG(b) }

const pageHTML = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
<style>
` + Style + `</style>
</head>
<body>
<main>
<h1>{{.Title}}</h1>
{{with .Lead}}<p class="lead">{{.}}</p>{{end}}
<div class="caution"><strong>Caution.</strong> {{.Caution}}</div>

<h2>Peaks</h2>
<p>Source: <strong>{{.Source}}</strong>. {{.SourceNote}}
Parameters: {{.Params}}; {{.GridPoints}} grid points{{if ne .Scanned .GridPoints}} ({{.Scanned}} scanned){{end}};
{{if .Bootstrap}}errors are standard deviations over {{.Bootstrap}} bootstrap resamples{{else}}no bootstrap errors{{end}}{{if gt .Sources 1}}, with the spread of {{.Sources}} models added{{end}}.{{with .ErrorsWarning}} <strong>{{.}}</strong>{{end}}</p>
<table>
<tr><th>curve</th><th>what it measures</th><th>peak at</th><th>height</th><th>above noise</th></tr>
{{range .Peaks}}<tr><td><code>{{.Curve}}</code></td><td>{{.What}}</td><td class="num">{{.At}}</td><td class="num">{{.Height}}</td><td>{{if eq .Noise "yes"}}<span class="good">yes</span>{{else}}{{.Noise}}{{end}}</td></tr>
{{end}}</table>
{{with .Zoom}}<ul class="notes">{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}

{{if eq .Source "exact"}}{{if not .Checks}}<h2>Check against exact results</h2>
<p>The source of this scan is the exact density of the generator recorded in the dataset, so the curves above are themselves the exact reference{{if .ExactSumsNote}} (with exact sums over all states){{end}}. Scan the same dataset with <code>--model</code> to compare a trained model with them.</p>{{end}}{{end}}
{{if .Checks}}<h2>Check against exact results</h2>
<table>
<tr><th>quantity</th><th>estimate</th><th>exact reference</th><th>difference</th><th>source of the reference</th></tr>
{{range .Checks}}<tr><td>{{.Quantity}}</td><td class="num">{{num .Estimate}} ± {{err .Err}}</td><td class="num">{{num .Reference}}</td><td class="num">{{pct .RelDiff}}</td><td>{{.Source}}</td></tr>
{{end}}</table>{{end}}

{{with .Notes}}<h2>Notes on reading the results</h2>
<ul class="notes">{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}

{{with .Problems}}<ul class="notes">{{range .}}<li class="warn">{{.}}</li>{{end}}</ul>{{end}}

{{with .Dataset}}<h2>Dataset</h2>
<table class="kv">
<tr><th>file</th><td><code>{{.Path}}</code></td></tr>
<tr><th>snapshots</th><td>{{.Snapshots}}{{with .PerPoint}} ({{.}} per grid point){{end}}</td></tr>
<tr><th>sites</th><td>{{.Sites}}{{with .Lattice}} (lattice {{lat .}}){{end}}, {{.Alphabet}} values per site</td></tr>
<tr><th>grid</th><td>{{.Points}} points of {{range $i, $p := .Params}}{{if $i}}, {{end}}{{$p}}{{end}}{{range .Axes}}<br>{{.}}{{end}}</td></tr>
<tr><th>origin</th><td>{{.Generator}}</td></tr>
</table>{{end}}

{{range $i, $m := .Models}}<h2>Model{{if gt (len $.Models) 1}} {{inc $i}}{{end}}</h2>
<table class="kv">
<tr><th>checkpoint</th><td><code>{{$m.Path}}</code></td></tr>
<tr><th>architecture</th><td>{{$m.Architecture}}</td></tr>
<tr><th>trainable parameters</th><td>{{$m.Params}}</td></tr>
<tr><th>training</th><td>{{$m.Epochs}} epochs ({{$m.Stopped}}); best epoch {{$m.BestEpoch}}</td></tr>
<tr><th>best validation NLL</th><td>{{bits $m.BestVal}}{{if $m.BestValErr}} ± {{printf "%.2g" $m.BestValErr}}{{end}} bits per site</td></tr>
{{with $m.HeldOut}}<tr><th>held-out points' NLL</th><td>{{bits .}} bits per site</td></tr>{{end}}
</table>
{{with index $.TrainCurves $i}}<figure>{{.}}<figcaption>Training and validation negative log-likelihood per epoch, in bits per site. The training figure is the mean over the epoch's minibatches while the weights changed; the validation figure uses the weights at the end of the epoch.</figcaption></figure>{{end}}
{{end}}

{{.Phases}}
<h2>Indicators</h2>
{{range .Figures}}<figure>{{.SVG}}<figcaption>{{.Caption}} (<code>{{.Name}}</code>)</figcaption></figure>
{{else}}<p>No pictures.</p>{{end}}

<footer>Files of this scan: {{range $i, $f := .Files}}{{if $i}}, {{end}}<code>{{$f}}</code>{{end}}. This page needs no network and no scripts.</footer>
</main>
</body>
</html>
`
