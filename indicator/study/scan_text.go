package study

import (
	"fmt"
	"io"
	"maps"
	"slices"

	"tidemark/data"
	"tidemark/indicator"
	"tidemark/indicator/report"
)

// WriteScan states the result of a scan written to the folder out: every
// peak with its error, the boundaries, the peaks of every zoom, the notes
// and the caution.
func WriteScan(w io.Writer, out string, res *indicator.Result, sum *report.Summary) {
	p := func(format string, a ...any) { fmt.Fprintf(w, format, a...) }
	p("scan: %s source, %d grid points (%d scanned), results in %s\n", sum.Source, sum.Grid.Points, sum.Grid.Scanned, out)
	p("errors: %s\n", sum.Errors.Statement)
	for _, c := range res.Curves {
		if len(c.Lines) == 0 {
			continue
		}
		if len(c.Peaks) == 0 {
			p("  %-14s no peak above the noise\n", c.Name)
			continue
		}
		for _, pk := range c.Peaks {
			p("  %-14s peak at %s, height %.4g ± %.2g\n", c.Name, FormatPeak(res.Names, pk), pk.Height, pk.HeightErr)
		}
	}
	for _, b := range res.Boundaries {
		p("  boundary from %s (ridge along %s): %d points\n", b.Indicator, b.Axis, len(b.Points))
	}
	writePhases(p, res)
	for _, z := range sum.Zoom {
		p("  zoom around %s (%d points of %s from %.6g to %.6g):\n", data.FormatPoint(res.Names, z.Around), z.Points, z.Axis, z.From, z.To)
		n := 0
		for _, name := range slices.Sorted(maps.Keys(z.Indicators)) {
			for _, pk := range z.Indicators[name].Peaks {
				p("    %-12s peak at %s\n", name, FormatPeak(res.Names, indicator.Peak{At: pk.At, Err: pk.Err}))
				n++
			}
		}
		if n == 0 {
			p("    no peak rose above the noise on this finer grid\n")
		}
	}
	for _, n := range res.Notes {
		p("note: %s\n", n)
	}
	p("caution: %s\n", indicator.Caution)
}
