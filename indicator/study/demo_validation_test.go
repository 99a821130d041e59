//go:build validation

package study

import (
	"bytes"
	"context"
	"math"
	"path/filepath"
	"testing"
)

// TestDemoFull runs the built-in demo at full size and checks its estimate
// against exact results of the periodic 12×12 lattice, from Kaufman's
// partition function (B. Kaufman, Phys. Rev. 76, 1232 (1949)): within 3% of
// the same indicator's peak computed with the exact density of the same
// snapshots, within 3% of the maximum of the Fisher information in T,
// N·C/T² (what the indicators measure; ising.KaufmanFisherPeak), and within 5% of the
// heat-capacity maximum (ising.KaufmanPeak), which lies 2% above it.
func TestDemoFull(t *testing.T) {
	o := DefaultDemo()
	o.Out = filepath.Join(t.TempDir(), "demo")
	var out bytes.Buffer
	res, err := o.Run(context.Background(), &out)
	if err != nil {
		t.Fatalf("demo: %v\n%s", err, out.String())
	}
	t.Logf("\n%s", out.String())
	for _, ref := range []struct {
		what string
		T    float64
		tol  float64
	}{
		{"peak of the exact density on the same snapshots", res.Same, 0.03},
		{"Fisher-information maximum", res.KaufmanF, 0.03},
		{"heat-capacity maximum", res.Kaufman, 0.05},
	} {
		if rel := math.Abs(res.T-ref.T) / ref.T; !(rel <= ref.tol) {
			t.Errorf("estimate T = %.4f ± %.2g (%s) is %.2f%% from the exact %s %.4f, want within %.0f%%", res.T, res.Err, res.Indicator, 100*rel, ref.what, ref.T, 100*ref.tol)
		}
	}
}
