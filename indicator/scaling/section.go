package scaling

import (
	"bytes"
	"fmt"
	"html/template"
	"os"
	"path/filepath"
	"strconv"

	"tidemark/indicator/report"
)

// sectionData is what the section template shows.
type sectionData struct {
	R     *Result
	Links map[string]string // scan folder → its report.html, relative to the page
	Peaks template.HTML
}

// Section returns the extrapolation as a fragment of HTML for a page in
// the folder from (a study's report, or extrapolate's own report.html):
// the combined estimate, the scans with links to their report.html
// (relative to from; no links when from is ""), a table of the estimates
// with the parts of their errors and the forms considered, and the picture
// of the fits. Its styles are report.Style's.
func (r *Result) Section(from string) (template.HTML, error) {
	p, err := peaksPlot(r)
	if err != nil {
		return "", fmt.Errorf("picture of the fits: %w", err)
	}
	pics := map[string][]byte{}
	if err := render(p, "peaks", pics); err != nil {
		return "", err
	}
	return r.section(from, pics["peaks.svg"])
}

func (r *Result) section(from string, peaksSVG []byte) (template.HTML, error) {
	d := sectionData{R: r, Links: map[string]string{}, Peaks: report.InlineSVG(peaksSVG)}
	for _, sc := range r.Scans {
		page := filepath.Join(sc.Dir, "report.html")
		if from == "" {
			break
		}
		if _, err := os.Stat(page); err != nil {
			continue
		}
		a, err1 := filepath.Abs(from)
		b, err2 := filepath.Abs(page)
		if rel, err := filepath.Rel(a, b); err1 == nil && err2 == nil && err == nil {
			d.Links[sc.Dir] = filepath.ToSlash(rel)
		}
	}
	var buf bytes.Buffer
	if err := sectionTmpl.Execute(&buf, d); err != nil {
		return "", fmt.Errorf("extrapolation section: %w", err)
	}
	return template.HTML(buf.String()), nil
}

// page is extrapolate's report.html: the section and the collapse pictures.
func page(res *Result, dir string, pics map[string][]byte, collapses []string) ([]byte, error) {
	type fig struct {
		SVG     template.HTML
		Caption string
	}
	sec, err := res.section(dir, pics["peaks.svg"])
	if err != nil {
		return nil, err
	}
	d := struct {
		Style    template.CSS
		Section  template.HTML
		Collapse []fig
		Notes    []string
	}{Style: template.CSS(report.Style), Section: sec, Notes: res.Notes}
	for _, c := range collapses {
		d.Collapse = append(d.Collapse, fig{report.InlineSVG(pics[c+".svg"]), "Curves of all sizes against the scaling variable, each divided by its maximum: they fall on one curve near 0 when the sizes obey the fitted scaling."})
	}
	var buf bytes.Buffer
	if err := pageTmpl.Execute(&buf, d); err != nil {
		return nil, fmt.Errorf("report.html: %w", err)
	}
	return buf.Bytes(), nil
}

var funcs = template.FuncMap{
	"g":  func(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) },
	"e":  func(v float64) string { return strconv.FormatFloat(v, 'g', 2, 64) },
	"f2": func(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) },
}

var sectionTmpl = template.Must(template.New("section").Funcs(funcs).Parse(`<section class="extrapolation">
<h2>Extrapolation to the infinite system</h2>
<p class="lead">Combined estimate: <strong>{{.R.Combined.Param}}_c = {{g .R.Combined.Value}} ± {{e .R.Combined.Err}}</strong>
from {{len .R.Combined.Indicators}} indicator(s);
{{if .R.Combined.Agree}}<span class="good">they agree within their errors</span>{{else}}<span class="warn">they do not agree within their errors</span>{{end}}
(χ² = {{f2 .R.Combined.Chi2}} for {{.R.Combined.Dof}} degrees of freedom, p = {{e .R.Combined.PValue}}).</p>
<p>Peaks: {{.R.Peaks}}. Form: {{.R.Form}}. Combination: {{.R.Combined.Method}}.</p>
<h3>Scans</h3>
<table>
<tr><th>folder</th><th>source</th><th>linear size</th></tr>
{{range .R.Scans}}<tr><td>{{$d := .Dir}}{{with index $.Links .Dir}}<a href="{{.}}"><code>{{$d}}</code></a>{{else}}<code>{{$d}}</code>{{end}}</td><td>{{.Source}}</td><td class="num">{{g .Size}}</td></tr>
{{end}}</table>
<h3>Estimates per indicator</h3>
<table>
<tr><th>indicator</th><th>{{.R.Param}}_c</th><th>statistical</th><th>systematic</th><th>ν</th><th>corrections</th><th>χ²/dof</th><th>sizes</th></tr>
{{range .R.Estimates}}<tr><td><code>{{.Indicator}}</code></td><td class="num">{{g .Value}} ± {{e .Err}}</td><td class="num">{{e .Stat}}</td><td class="num">{{if .SystKnown}}{{e .Syst}}{{else}}not measured{{end}}</td><td class="num">{{g .Nu}}{{if .NuFitted}} ± {{e .NuErr}} (fitted){{end}}</td><td class="num">{{.Corrections}}{{with .Forms}} (forms:{{range .}} {{.Corrections}} → {{g .Value}}{{if .AIC}}, AIC {{f2 .AIC}}{{end}};{{end}}){{end}}</td><td class="num">{{f2 .Chi2Dof}}</td><td class="num">{{range $i, $s := .Sizes}}{{if $i}}, {{end}}{{g $s}}{{end}}</td></tr>
{{end}}</table>
<p>The systematic error is the larger of the change of {{.R.Param}}_c when the smallest size is left out and the change the last correction term made; it is added to the statistical error in quadrature.</p>
<figure>{{.Peaks}}<figcaption>Peak positions against L^(−1/ν) (each indicator with its own ν) with error bars, the weighted fits (dashed) and the extrapolated values at L = ∞ (squares).</figcaption></figure>
</section>
`))

var pageTmpl = template.Must(template.New("page").Funcs(funcs).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>tidemark extrapolation</title>
<style>{{.Style}}</style>
</head>
<body>
<main>
<h1>tidemark extrapolation to the infinite system</h1>
{{.Section}}
{{if .Collapse}}<h2>Data collapse</h2>
{{range .Collapse}}<figure>{{.SVG}}<figcaption>{{.Caption}}</figcaption></figure>
{{end}}{{end}}
{{with .Notes}}<h2>Notes</h2><ul class="notes">{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}
<footer>Written by tidemark extrapolate. Errors are one standard deviation.</footer>
</main>
</body>
</html>
`))
