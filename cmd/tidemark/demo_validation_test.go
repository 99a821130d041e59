//go:build validation

package main

import (
	"bytes"
	"math"
	"path/filepath"
	"testing"
)

// TestDemoFull runs the built-in demo at full size and checks its estimate
// against the exact heat-capacity maximum of the periodic 12×12 lattice
// (B. Kaufman, Phys. Rev. 76, 1232 (1949), via ising.KaufmanPeak): within 3%.
func TestDemoFull(t *testing.T) {
	o := defaultDemo()
	o.out, o.quiet = filepath.Join(t.TempDir(), "demo"), true
	var out bytes.Buffer
	res, err := demo(&out, &o)
	if err != nil {
		t.Fatalf("demo: %v\n%s", err, out.String())
	}
	t.Logf("\n%s", out.String())
	if rel := math.Abs(res.T-res.Kaufman) / res.Kaufman; rel > 0.03 {
		t.Errorf("estimate T = %.4f ± %.2g (%s) is %.2f%% from the exact peak %.4f, want within 3%%", res.T, res.Err, res.Indicator, 100*rel, res.Kaufman)
	}
}
