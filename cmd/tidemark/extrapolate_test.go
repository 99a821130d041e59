package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fakeScan writes a scan folder with a summary.json holding one fisher peak
// (none when at is NaN) and an indicators.csv with a Lorentzian of width
// 1/L around it (invented data, for the command's plumbing).
func fakeScan(t *testing.T, dir, param string, lattice []int, at, err float64) string {
	t.Helper()
	if e := os.MkdirAll(dir, 0o755); e != nil {
		t.Fatal(e)
	}
	peaks := "[]"
	if !math.IsNaN(at) {
		peaks = fmt.Sprintf(`[{"at": [%g], "err": [%g], "height": 10, "height_err": 0.1, "prominence": 5, "tested_against_noise": true}]`, at, err)
	}
	lat := ""
	if lattice != nil {
		b, _ := json.Marshal(lattice)
		lat = fmt.Sprintf(`"lattice": %s,`, b)
	}
	sum := fmt.Sprintf(`{"source": "exact", "params": [%q], %s "grid": {"points": 11, "refine": 1}, "indicators": {"fisher": {"placement": "midpoints", "peaks": %s}}}`, param, lat, peaks)
	if e := os.WriteFile(filepath.Join(dir, "summary.json"), []byte(sum), 0o644); e != nil {
		t.Fatal(e)
	}
	var csv strings.Builder
	fmt.Fprintf(&csv, "%s,fisher,fisher_err\n", param)
	L := 8.0
	if lattice != nil {
		L = float64(lattice[0])
	}
	for i := 0; i <= 40; i++ {
		x := 2 + 0.025*float64(i)
		u := (x - at) * L
		fmt.Fprintf(&csv, "%g,%g,0.1\n", x, 10/(1+u*u))
	}
	if e := os.WriteFile(filepath.Join(dir, "indicators.csv"), []byte(csv.String()), 0o644); e != nil {
		t.Fatal(e)
	}
	return dir
}

func TestExtrapolateWritesFolder(t *testing.T) {
	dir := t.TempDir()
	var args []string
	for _, L := range []int{8, 12, 16, 24} {
		at := 2.27 + 0.5/float64(L)
		args = append(args, fakeScan(t, filepath.Join(dir, fmt.Sprint("s", L)), "T", []int{L, L}, at, 0.002))
	}
	// A scan's own report is linked from the extrapolation's.
	if err := os.WriteFile(filepath.Join(args[0], "report.html"), []byte("<html></html>"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "fss")
	stdout, err := execTidemark(t, append([]string{"extrapolate", "--nu", "1", "--peaks", "scan", "--bootstrap", "200", "-o", out}, args...)...)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(stdout, "combined: T_c = 2.27") {
		t.Errorf("stdout does not state the combined estimate:\n%s", stdout)
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	var s struct {
		Estimates []struct {
			Indicator, Param string
			Value, Err, Nu   float64
			Sizes            []float64
			Chi2Dof          float64 `json:"chi2_per_dof"`
		}
		Combined struct {
			Param      string
			Value, Err float64
			Method     string
			Agree      bool
		}
	}
	if err := json.Unmarshal(b, &s); err != nil {
		t.Fatal(err)
	}
	if len(s.Estimates) != 1 || s.Estimates[0].Indicator != "fisher" || s.Estimates[0].Param != "T" || s.Estimates[0].Nu != 1 || len(s.Estimates[0].Sizes) != 4 {
		t.Fatalf("estimates: %+v", s.Estimates)
	}
	// Exact points on the form: λ_c = 2.27 to far within the error.
	if e := s.Estimates[0]; math.Abs(e.Value-2.27) > 1e-9 || !(e.Err > 0) {
		t.Errorf("fisher: %v ± %v, expected 2.27", e.Value, e.Err)
	}
	if s.Combined.Param != "T" || math.Abs(s.Combined.Value-2.27) > 1e-9 || s.Combined.Method == "" || !s.Combined.Agree {
		t.Errorf("combined: %+v", s.Combined)
	}
	for _, f := range []string{"peaks.svg", "peaks.png", "collapse-fisher.svg", "report.html"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("missing %s: %v", f, err)
		}
	}
	if b, err := os.ReadFile(filepath.Join(out, "report.html")); err != nil || !strings.Contains(string(b), `href="../s8/report.html"`) || strings.Contains(string(b), "s12/report.html") {
		t.Errorf("report.html should link the report of s8 (the only scan with one): %v", err)
	}
	// A second run without --force leaves the folder alone.
	if _, err := execTidemark(t, append([]string{"extrapolate", "--nu", "1", "-o", out}, args...)...); err == nil || !strings.Contains(err.Error(), "--force") {
		t.Errorf("second run: %v, expected a refusal naming --force", err)
	}
}

// TestExtrapolateBadInput runs the binary: each bad input exits with status
// 2 and one line on stderr, and writes nothing.
func TestExtrapolateBadInput(t *testing.T) {
	dir := t.TempDir()
	s8 := fakeScan(t, filepath.Join(dir, "s8"), "T", []int{8, 8}, 2.33, 0.01)
	s12 := fakeScan(t, filepath.Join(dir, "s12"), "T", []int{12, 12}, 2.31, 0.01)
	s16 := fakeScan(t, filepath.Join(dir, "s16"), "T", []int{16, 16}, 2.30, 0.01)
	h16 := fakeScan(t, filepath.Join(dir, "h16"), "h", []int{16, 16}, 1.0, 0.01)
	e16 := fakeScan(t, filepath.Join(dir, "e16"), "T", []int{16, 16}, math.NaN(), 0)
	o16 := fakeScan(t, filepath.Join(dir, "o16"), "T", nil, 2.30, 0.01)
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"two sizes", []string{s8, s12, "--nu", "1"}, "expected scans of at least 3 different sizes, found 2 (L=8, L=12)"},
		{"a size twice", []string{s8, s12, s12, "--nu", "1"}, "at least 3 different sizes, found 2"},
		{"nu fitted from three sizes", []string{s8, s12, s16}, "at least 4 different sizes"},
		{"inconsistent parameters", []string{s8, s12, h16, "--nu", "1"}, "expected the parameter T as in " + s8 + ", found h"},
		{"scan without peaks", []string{s8, s12, e16, "--nu", "1"}, "expected at least one indicator peak, found none"},
		{"no lattice recorded", []string{s8, s12, o16, "--nu", "1"}, "expected --sizes"},
		{"corrections not a count", []string{s8, s12, s16, "--nu", "1", "--corrections", "some"}, `--corrections: expected auto, 0, 1 or 2, found "some"`},
		{"too many corrections", []string{s8, s12, s16, "--nu", "1", "--corrections", "3"}, "--corrections: expected 0 to 2 terms, found 3"},
		{"corrections beyond the sizes", []string{s8, s12, s16, "--nu", "1", "--corrections", "1"}, "at least 4 different sizes"},
		{"unknown peak method", []string{s8, s12, s16, "--nu", "1", "--peaks", "top"}, `--peaks: expected curve or scan, found "top"`},
		{"sizes for too few scans", []string{s8, s12, s16, "--nu", "1", "--sizes", "8,12"}, "expected one size per scan (3), found 2"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(dir, "out-"+strings.ReplaceAll(tc.name, " ", "-"))
			r := runBin(t, dir, append([]string{"extrapolate", "-o", out}, tc.args...)...)
			msg := strings.TrimSuffix(r.stderr, "\n")
			if r.status != 2 || strings.Contains(msg, "\n") || !strings.Contains(msg, tc.want) {
				t.Errorf("status %d, stderr %q; expected 2 and one line containing %q", r.status, r.stderr, tc.want)
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("%s was written", out)
			}
		})
	}
	// --sizes stands in for a lattice the scan did not record.
	out := filepath.Join(dir, "ok")
	if r := runBin(t, dir, "extrapolate", s8, s12, o16, "--nu", "1", "--sizes", "8,12,16", "-o", out); r.status != 0 {
		t.Errorf("with --sizes: status %d, stderr %q", r.status, r.stderr)
	}
}
