package study

import (
	"bytes"
	"strings"
	"testing"

	"tidemark/indicator"
	"tidemark/indicator/report"
)

// TestWriteScanZoomWithoutPeaks checks that a zoom whose finer grid shows
// no peak says so instead of printing a heading with nothing under it, and
// that a zoom with a peak lists it.
func TestWriteScanZoomWithoutPeaks(t *testing.T) {
	res := &indicator.Result{Names: []string{"T"}}
	sum := &report.Summary{Source: "model", Zoom: []report.ZoomSummary{
		{Around: []float64{2.2}, Axis: "T", From: 2.1, To: 2.3, Points: 9, Indicators: map[string]report.IndicatorSummary{"lbc": {}, "fisher": {}}},
		{Around: []float64{2.6}, Axis: "T", From: 2.5, To: 2.7, Points: 9, Indicators: map[string]report.IndicatorSummary{
			"lbc": {Peaks: []report.PeakSummary{{At: []float64{2.61}, Err: []float64{0.01}}}}}},
	}}
	var b bytes.Buffer
	WriteScan(&b, "scan/", res, sum)
	text := b.String()
	quiet, loud, _ := strings.Cut(strings.SplitN(text, "zoom around T=2.2", 2)[1], "zoom around T=2.6")
	if !strings.Contains(quiet, "no peak rose above the noise") {
		t.Errorf("the zoom without peaks says nothing under its heading:\n%s", text)
	}
	if !strings.Contains(loud, "lbc          peak at T=2.61 ± 0.01") || strings.Contains(loud, "no peak") {
		t.Errorf("the zoom with a peak:\n%s", text)
	}
}
