package scaling

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"
)

func TestLinearSize(t *testing.T) {
	for _, tc := range []struct {
		lat  []int
		want int
	}{{nil, 0}, {[]int{12}, 12}, {[]int{16, 16}, 16}, {[]int{8, 16}, 0}, {[]int{4, 4, 4}, 4}} {
		if got := LinearSize(tc.lat); got != tc.want {
			t.Errorf("LinearSize(%v) = %d, expected %d", tc.lat, got, tc.want)
		}
	}
}

// TestReadScanPeaks keeps the highest peak of each indicator, prefers the
// zoom pass's peak inside its window, and refuses scans it cannot use.
func TestReadScanPeaks(t *testing.T) {
	for _, tc := range []struct {
		name, json string
		want       map[string]Point
		err        error
	}{
		{"highest and zoomed", `{"source": "exact", "params": ["T"], "lattice": [8, 8], "indicators": {
			"fisher": {"peaks": [{"at": [2.1], "err": [0.01], "height": 5}, {"at": [2.3], "err": [0.02], "height": 7}]},
			"lbc": {"peaks": [{"at": [2.25], "err": [0.03], "height": 0.9}]}},
			"zoom": [{"around": [2.3], "axis": "T", "from": 2.2, "to": 2.4, "points": 9, "indicators": {"fisher": {"peaks": [{"at": [2.31], "err": [0.005], "height": 7.1}]}}}]}`,
			map[string]Point{"fisher": {8, 2.31, 0.005}, "lbc": {8, 2.25, 0.03}}, nil},
		{"no peaks", `{"source": "exact", "params": ["T"], "lattice": [8, 8], "indicators": {"fisher": {"peaks": []}}}`, nil, ErrInput},
		{"two parameters", `{"source": "exact", "params": ["T", "h"], "indicators": {}}`, nil, ErrInput},
		{"not JSON", `{"source": `, nil, ErrInput},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			if err := os.WriteFile(filepath.Join(dir, "summary.json"), []byte(tc.json), 0o644); err != nil {
				t.Fatal(err)
			}
			sc, err := ReadScan(dir)
			if !errors.Is(err, tc.err) || (tc.err == nil) != (err == nil) {
				t.Fatalf("error %v, expected %v", err, tc.err)
			}
			if err != nil {
				return
			}
			if len(sc.Peaks) != len(tc.want) {
				t.Fatalf("peaks %v, expected %v", sc.Peaks, tc.want)
			}
			for k, w := range tc.want {
				if sc.Peaks[k] != w {
					t.Errorf("%s: %+v, expected %+v", k, sc.Peaks[k], w)
				}
			}
		})
	}
}

// TestRunCombinesMeasuredErrors: an indicator with peaks at only 3 sizes
// has no systematic error (no size to spare) and stays out of the
// combination when another indicator has one (invented peaks on
// 2 + 0.5/L, with a 1% offset for the short one).
func TestRunCombinesMeasuredErrors(t *testing.T) {
	base := t.TempDir()
	var dirs []string
	for _, L := range []float64{8, 12, 16, 24, 32} {
		short := ""
		if L >= 16 {
			short = fmt.Sprintf(`, "short": {"peaks": [{"at": [%g], "err": [0.0001], "height": 1}]}`, 2.02+0.5/L)
		}
		js := fmt.Sprintf(`{"source": "exact", "params": ["T"], "lattice": [%g, %g], "indicators": {"long": {"peaks": [{"at": [%g], "err": [0.002], "height": 1}]}%s}}`, L, L, 2+0.5/L, short)
		d := filepath.Join(base, fmt.Sprint(L))
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(d, "summary.json"), []byte(js), 0o644); err != nil {
			t.Fatal(err)
		}
		dirs = append(dirs, d)
	}
	res, err := Run(dirs, Options{Fit: FitOptions{Nu: 1, Auto: true}})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Estimates) != 2 || len(res.Combined.Indicators) != 1 || res.Combined.Indicators[0] != "long" || math.Abs(res.Combined.Value-2) > 1e-9 {
		t.Errorf("combined %+v from %d estimates; expected long alone, at 2", res.Combined, len(res.Estimates))
	}
}
