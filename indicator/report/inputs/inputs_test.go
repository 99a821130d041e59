package inputs

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/density/densitytest"
	"tidemark/indicator"
	"tidemark/indicator/report"
)

// TestReportHTMLWithoutPage checks that a scan given only file names still
// gets a page, and says what it could not summarise.
func TestReportHTMLWithoutPage(t *testing.T) {
	res := scan2D(t)
	dir := filepath.Join(t.TempDir(), "scan")
	if _, err := report.Write(dir, false, res, report.Info{Source: "model", Data: "/no/such/data.npz", Models: []string{"/no/such/model.ckpt"}, Page: Page("/no/such/data.npz", []string{"/no/such/model.ckpt"})}); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, want := range []string{"dataset summary not available", "model summary not available", "boundary", "Caution."} {
		if !strings.Contains(page, want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
}

// scan2D is an exact-sum scan of a 2-D product grid whose local and fisher
// maps have a boundary (the line T = 1 + J/2 of a logistic source).
func scan2D(t *testing.T) *indicator.Result {
	t.Helper()
	src := &densitytest.Logistic{N: 8, A: 4, B: 0.5, C: 1, D: 2}
	var pts [][]float64
	for i := 0; i < 11; i++ {
		for j := 0; j < 5; j++ {
			pts = append(pts, []float64{0.5 + 0.15*float64(i), float64(j) * 0.25})
		}
	}
	ds, err := data.New(len(pts), src.N, []string{"T", "J"}, 2, nil, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range pts {
		copy(ds.Params[2*k:], p)
	}
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	return res
}
