package report

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/density/densitytest"
	"tidemark/indicator"
)

func scan2D(t *testing.T) (*indicator.Result, *densitytest.Logistic) {
	t.Helper()
	src := &densitytest.Logistic{N: 8, A: 4, B: 0.5, C: 1, D: 2}
	var pts [][]float64
	for i := 0; i < 11; i++ {
		for j := 0; j < 5; j++ {
			pts = append(pts, []float64{0.5 + 0.15*float64(i), float64(j) * 0.25})
		}
	}
	ds, err := data.New(2*len(pts), src.N, []string{"T", "J"}, 2, nil, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range pts {
		copy(ds.Params[4*k:], p)
		copy(ds.Params[4*k+2:], p)
	}
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	return res, src
}

func TestWriteTwoDimensionalScan(t *testing.T) {
	res, src := scan2D(t)
	dir := filepath.Join(t.TempDir(), "scan")
	if err := os.Mkdir(dir, 0o755); err != nil { // an empty folder is accepted
		t.Fatal(err)
	}
	if _, err := Write(dir, false, res, Info{Source: "exact", Refine: 1}); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"indicators.csv", "summary.json", "local_T.svg", "local_T.png", "fisher_deriv.svg", "pbm.png", "lbc_J.svg"} {
		if st, err := os.Stat(filepath.Join(dir, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
	var sum struct {
		Params     []string
		Boundaries []struct {
			Indicator string
			Along     string
			Points    [][]float64
		}
	}
	b, _ := os.ReadFile(filepath.Join(dir, "summary.json"))
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, bd := range sum.Boundaries {
		if bd.Indicator != "fisher_deriv" || bd.Along != "T" {
			continue
		}
		found = true
		if len(bd.Points) != 5 {
			t.Errorf("fisher_deriv boundary has %d points, want one per J value", len(bd.Points))
		}
		for _, p := range bd.Points {
			// The trace of the metric, a²N p(1−p)(1 + b²), peaks on the line too.
			if want := src.C + src.B*p[1]; math.Abs(p[0]-want) > 0.03 {
				t.Errorf("boundary point %v, want T = %.3f", p, want)
			}
		}
	}
	if !found {
		t.Errorf("no fisher_deriv boundary along T in %s", b)
	}
	csv, _ := os.ReadFile(filepath.Join(dir, "indicators.csv"))
	if head := strings.SplitN(string(csv), "\n", 2)[0]; !strings.HasPrefix(head, "T,J,") || !strings.Contains(head, "local_T,local_T_err") {
		t.Errorf("csv header %q", head)
	}
	// Non-empty: refused without force, replaced with force.
	if _, err := Write(dir, false, res, Info{Source: "exact"}); err == nil || !strings.Contains(err.Error(), "not empty") {
		t.Errorf("non-empty folder without force: %v", err)
	}
	if _, err := Write(dir, true, res, Info{Source: "exact"}); err != nil {
		t.Errorf("with force: %v", err)
	}
	ents, _ := os.ReadDir(filepath.Dir(dir))
	if len(ents) != 1 {
		t.Errorf("left behind: %v", ents)
	}
}

// TestRefinedLocalCaption checks that the local indicator's caption on a
// refined grid says its heights are not comparable with those at the data's
// grid points, and that other captions and unrefined grids say nothing.
func TestRefinedLocalCaption(t *testing.T) {
	local := &indicator.Curve{Name: "local", Indicator: indicator.Local}
	lbc := &indicator.Curve{Name: "lbc", Indicator: indicator.LBC}
	if n := refinedNote(local, 4); !strings.Contains(n, "not comparable") || !strings.Contains(n, "4×") {
		t.Errorf("refined local: %q", n)
	}
	if n := refinedNote(local, 1) + refinedNote(lbc, 4); n != "" {
		t.Errorf("unrefined local or refined lbc: %q", n)
	}
}
