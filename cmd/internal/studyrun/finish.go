package studyrun

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/indicator/report"
	"tidemark/indicator/scaling"
)

// Summary is the content of the study's summary.json: every figure the
// study produced that does not depend on how or where it ran (no timings,
// no absolute paths), so that two runs of one study compare bit for bit.
type Summary struct {
	Kind          SystemKind      `json:"kind"`
	Grid          string          `json:"grid,omitempty"`
	Seed          uint64          `json:"seed"`
	Sizes         []SizeSummary   `json:"sizes"`
	Extrapolation *scaling.Result `json:"extrapolation,omitempty"`
	// NotExtrapolated says why the scans' peaks could not be extrapolated
	// (too few sizes with a peak, say) when the study asked for it.
	NotExtrapolated string `json:"not_extrapolated,omitempty"`
	// Files holds the SHA-256 of each scan's indicators.csv and of each
	// simulated dataset's snapshots and parameters (the files themselves
	// record when they were written).
	Files map[string]string `json:"sha256"`
}

// SizeSummary is one size's part of the summary.
type SizeSummary struct {
	Size       int                                `json:"size"`
	Dataset    string                             `json:"dataset"`
	Models     []MemberSummary                    `json:"models"`
	Scan       string                             `json:"scan"`
	Indicators map[string]report.IndicatorSummary `json:"indicators"`
}

// MemberSummary is one trained ensemble member.
type MemberSummary struct {
	Path               string  `json:"path"`
	Seed               uint64  `json:"seed"`
	BestEpoch          int     `json:"best_epoch"`
	BestValBitsPerSite float64 `json:"best_val_bits_per_site"`
}

// finish extrapolates the scans' peaks (when enabled) and writes the
// study's summary.json and report.html.
func (p *Plan) finish(ctx context.Context) error {
	st := p.Study
	sum := Summary{Kind: st.System.Kind, Grid: st.System.Grid, Seed: st.System.Seed, Files: map[string]string{}}
	var dirs []string
	for _, l := range st.System.Sizes {
		dirs = append(dirs, filepath.Join(p.Out, scanDir(l)))
	}
	if *st.Extrapolate.Enabled {
		res, err := scaling.Run(dirs, scaling.Options{Fit: st.fitOptions(deriveSeed(st.System.Seed, "finish"))})
		if errors.Is(err, scaling.ErrInput) {
			// The scans are what they are (no peak at enough sizes, say): the
			// study still ends with its summary and report, which say why
			// there is no extrapolation, as does the folder.
			return p.finishWithout(&sum, dirs, err)
		}
		if err != nil {
			return fmt.Errorf("extrapolate: %w", err)
		}
		// The record names the scans relative to the output folder, so that
		// it does not depend on where the study ran.
		for i := range res.Scans {
			res.Scans[i].Dir = scanDir(st.System.Sizes[i])
		}
		for i, n := range res.Notes {
			res.Notes[i] = p.relativeScans(n, dirs)
		}
		if err := scaling.Write(filepath.Join(p.Out, extrapolationDir), true, res); err != nil {
			return fmt.Errorf("extrapolate: %w", err)
		}
		sum.Extrapolation = res
	}
	return p.writeSummary(&sum)
}

// relativeScans replaces in text the scan folders dirs (one per size, as
// finish passed them to the extrapolation) by their names relative to the
// output folder, so that the record does not depend on where the study ran.
func (p *Plan) relativeScans(text string, dirs []string) string {
	for j, d := range dirs {
		text = strings.ReplaceAll(text, d, scanDir(p.Study.System.Sizes[j]))
	}
	return text
}

// finishWithout records why the scans could not be extrapolated (err) in
// the extrapolation folder's summary.json, emptying the folder first so
// that no earlier fit remains there, and in the study's summary, then
// writes the summary and report.
func (p *Plan) finishWithout(sum *Summary, dirs []string, err error) error {
	why := p.relativeScans(err.Error(), dirs)
	sum.NotExtrapolated = why
	dir := filepath.Join(p.Out, extrapolationDir)
	if err := os.RemoveAll(dir); err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	// The folder's summary.json (what the unit's stamp hashes) says why.
	js, err := json.MarshalIndent(struct {
		NotExtrapolated string `json:"not_extrapolated"`
	}{why}, "", "  ")
	if err != nil {
		return err
	}
	if err := safefile.WriteBytes(filepath.Join(dir, summaryFile), true, append(js, '\n')); err != nil {
		return err
	}
	return p.writeSummary(sum)
}

// writeSummary completes sum with every size's dataset, models and scan
// peaks and writes the study's summary.json and report.html.
func (p *Plan) writeSummary(sum *Summary) error {
	st := p.Study
	for _, l := range st.System.Sizes {
		ss := SizeSummary{Size: l, Dataset: p.datasetName(l), Scan: scanDir(l)}
		if err := snapshotsHash(sum.Files, ss.Dataset, p.datasetOf(l)); err != nil {
			return err
		}
		for m := 1; m <= st.Model.Ensemble; m++ {
			rel := modelPath(l, m)
			ck, err := checkpoints.Load(filepath.Join(p.Out, rel))
			if err != nil {
				return err
			}
			h := ck.Header
			ss.Models = append(ss.Models, MemberSummary{Path: rel, Seed: deriveSeed(st.System.Seed, fmt.Sprintf("train/L%d/m%d", l, m)),
				BestEpoch: h.BestEpoch, BestValBitsPerSite: h.BestValBitsPerSite})
		}
		b, err := os.ReadFile(filepath.Join(p.Out, ss.Scan, summaryFile))
		if err != nil {
			return err
		}
		var scan report.Summary
		if err := json.Unmarshal(b, &scan); err != nil {
			return fmt.Errorf("%s: %w", ss.Scan, err)
		}
		ss.Indicators = scan.Indicators
		if err := p.hashInto(sum.Files, filepath.Join(ss.Scan, "indicators.csv")); err != nil {
			return err
		}
		sum.Sizes = append(sum.Sizes, ss)
	}
	js, err := json.MarshalIndent(sum, "", "  ")
	if err != nil {
		return err
	}
	page, err := studyPage(sum)
	if err != nil {
		return err
	}
	if err := safefile.WriteBytes(filepath.Join(p.Out, reportFile), true, page); err != nil {
		return err
	}
	return safefile.WriteBytes(filepath.Join(p.Out, summaryFile), true, append(js, '\n'))
}

// snapshotsHash records under name the SHA-256 of the snapshots and
// parameters of the dataset at path (not of the file, which records when
// it was written).
func snapshotsHash(m map[string]string, name, path string) error {
	ds, err := data.Read(path)
	if err != nil {
		return err
	}
	h := sha256.New()
	h.Write(ds.States)
	for _, v := range ds.Params {
		binary.Write(h, binary.LittleEndian, math.Float64bits(v))
	}
	m[name] = hex.EncodeToString(h.Sum(nil))
	return nil
}

func (p *Plan) hashInto(m map[string]string, rel string) error {
	h, err := fileHash(filepath.Join(p.Out, rel))
	if err != nil {
		return err
	}
	m[rel] = h
	return nil
}

var pageTmpl = template.Must(template.New("study").Funcs(template.FuncMap{
	// top is the highest peak, the one the extrapolation fits.
	"top": func(pks []report.PeakSummary) report.PeakSummary {
		best := pks[0]
		for _, p := range pks[1:] {
			if p.Height > best.Height {
				best = p
			}
		}
		return best
	},
	"names": func(m map[string]report.IndicatorSummary) []string {
		var s []string
		for k := range m {
			s = append(s, k)
		}
		sort.Strings(s)
		return s
	},
}).Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>tidemark study</title>
<style>body{font-family:sans-serif;max-width:60em;margin:2em auto}table{border-collapse:collapse}td,th{border:1px solid #bbb;padding:.3em .6em;text-align:left}</style>
</head><body>
<h1>Study: {{.Kind}} over {{.Grid}}</h1>
<h2>Sizes</h2>
<table><tr><th>size</th><th>dataset</th><th>models (best validation, bits/site)</th><th>highest peaks</th><th>scan</th></tr>
{{range .Sizes}}{{$s := .}}<tr><td>{{.Size}}</td><td>{{.Dataset}}</td>
<td>{{range .Models}}{{.Path}}: {{printf "%.5f" .BestValBitsPerSite}}<br>{{end}}</td>
<td>{{range names .Indicators}}{{$ind := index $s.Indicators .}}{{if $ind.Peaks}}{{$pk := top $ind.Peaks}}{{.}}: {{range $pk.At}}{{printf "%.4g" .}} {{end}}± {{range $pk.Err}}{{printf "%.2g" .}} {{end}}<br>{{end}}{{end}}</td>
<td><a href="{{.Scan}}/report.html">{{.Scan}}</a></td></tr>
{{end}}</table>
{{with .NotExtrapolated}}<h2>Extrapolation to the infinite system</h2>
<p>Not extrapolated: {{.}}</p>{{end}}
{{with .Extrapolation}}<h2>Extrapolation to the infinite system</h2>
<p>{{.Form}}: {{.Combined.Param}}<sub>c</sub> = {{printf "%.5g" .Combined.Value}} ± {{printf "%.2g" .Combined.Err}} ({{.Combined.Method}})</p>
<table><tr><th>indicator</th><th>value</th><th>error</th><th>ν</th><th>χ²/dof</th></tr>
{{range .Estimates}}<tr><td>{{.Indicator}}</td><td>{{printf "%.5g" .Value}}</td><td>{{printf "%.2g" .Err}}</td><td>{{printf "%.3g" .Nu}}</td><td>{{printf "%.3g" .Chi2Dof}}</td></tr>
{{end}}</table>
<p><img src="extrapolation/peaks.svg" alt="peak positions against size"></p>
<p><a href="extrapolation/report.html">the extrapolation's page</a></p>{{end}}
</body></html>
`))

func studyPage(sum *Summary) ([]byte, error) {
	var b bytes.Buffer
	if err := pageTmpl.Execute(&b, sum); err != nil {
		return nil, fmt.Errorf("report.html: %w", err)
	}
	return b.Bytes(), nil
}
