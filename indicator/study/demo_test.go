package study

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"tidemark/data/ising"
)

// smallDemo is a smaller variant of the built-in scenario for tests: a 10×10
// lattice, 10 temperatures from 1.8 to 3.0, fewer snapshots, epochs and
// resamples. With seed 1 its softplus model put the lbc peak at T = 2.194,
// 3.9% below the lbc peak of the exact density on the same snapshots
// (2.283); a relu model gave 2.292 (2026-12-01). With 300–400 snapshots
// and 12–15 epochs per run the spread between seeds was ±0.1
// (under-trained models), which is why it is not smaller.
func smallDemo(out string) Demo {
	o := DefaultDemo()
	o.Out, o.Threads = out, 2
	o.Size, o.Points, o.Samples, o.Epochs = 10, 10, 500, 25
	o.TLo, o.THi = 1.8, 3.0
	o.ModelSamples, o.Bootstrap = 200, 40
	return o
}

// TestDemoSmall runs the whole job on a 10×10 lattice and checks the folder
// and that the estimate lies within 5% of the same indicator's peak
// computed with the exact density of the same snapshots (ln p = −E/T − ln Z,
// Z from B. Kaufman, Phys. Rev. 76, 1232 (1949)) and within 5% of the
// maximum of the exact Fisher information N·C/T² of the periodic 10×10
// lattice (from Kaufman's heat capacity; about T = 2.279), which is what the
// indicators measure. The heat-capacity maximum (ising.KaufmanPeak, about
// T = 2.345) is only logged: it lies 3% above the Fisher maximum here.
func TestDemoSmall(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "demo")
	o := smallDemo(dir)
	var out bytes.Buffer
	res, err := o.Run(context.Background(), &out)
	if err != nil {
		t.Fatalf("demo: %v\n%s", err, out.String())
	}
	for _, f := range []string{DemoData, DemoModel, DemoPage, "scan/indicators.csv", "scan/summary.json", "scan/report.html", "scan/lbc.svg"} {
		if st, err := os.Stat(filepath.Join(dir, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
	kp, _ := ising.KaufmanPeak(10, 10, 1, 1, o.TLo, o.THi)
	if math.Abs(res.Kaufman-kp) > 1e-9 {
		t.Errorf("reference %v, want KaufmanPeak %v", res.Kaufman, kp)
	}
	if rel := math.Abs(res.T-res.Same) / res.Same; !(rel <= 0.05) {
		t.Errorf("estimate T = %.4f ± %.2g from %s is %.1f%% from the exact density's %s peak %.4f on the same snapshots, want within 5%%\n%s", res.T, res.Err, res.Indicator, 100*rel, res.Indicator, res.Same, out.String())
	}
	if rel := math.Abs(res.T-res.KaufmanF) / res.KaufmanF; rel > 0.05 {
		t.Errorf("estimate T = %.4f ± %.2g from %s is %.1f%% from the exact Fisher-information peak %.4f, want within 5%%", res.T, res.Err, res.Indicator, 100*rel, res.KaufmanF)
	}
	text := out.String()
	t.Logf("estimate T = %.4f ± %.2g from %s; exact 10×10 peak %.4f\n%s", res.T, res.Err, res.Indicator, kp, out.String())
	for _, want := range []string{"transition: T = ", "exact density on the same snapshots", "Kaufman", "Onsager", "2.2692", "report: " + filepath.Join(dir, DemoPage), "caution: "} {
		if !strings.Contains(text, want) {
			t.Errorf("output lacks %q:\n%s", want, text)
		}
	}
	// The best validation NLL carries its standard error (issue 25: every
	// printed mean has one).
	if m := regexp.MustCompile(`best validation NLL (\d+\.\d+) ± (\d[\d.e-]*) bits per site`).FindStringSubmatch(text); m == nil {
		t.Errorf("output gives the best validation NLL without its error:\n%s", text)
	} else if mean, se := parseFloat(m[1]), parseFloat(m[2]); !(se > 0 && se < mean) {
		t.Errorf("best validation NLL %s ± %s: expected a positive error below the mean", m[1], m[2])
	}
	page, _ := os.ReadFile(filepath.Join(dir, DemoPage))
	for _, want := range []string{"Check against exact results", "Kaufman", "Onsager", "monolayer.ckpt", "<svg"} {
		if !strings.Contains(string(page), want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	// No temporary folder is left beside the output.
	ents, _ := os.ReadDir(filepath.Dir(dir))
	if len(ents) != 1 {
		t.Errorf("left beside the demo folder: %v", ents)
	}
}

// parseFloat reads a printed number; NaN when it is not one.
func parseFloat(s string) float64 {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return math.NaN()
	}
	return v
}
