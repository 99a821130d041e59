package main

import (
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestTrainPrintsValidationError: every validation NLL train prints, per
// epoch and for the best epoch, carries its standard error over the
// validation snapshots, and so does inspect's line on the checkpoint.
func TestTrainPrintsValidationError(t *testing.T) {
	dir := t.TempDir()
	ds, ck := filepath.Join(dir, "d.npz"), filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "3", "--grid", "T=1:4:4", "--samples", "200", "--exact-samples", "--quiet", "-o", ds); err != nil {
		t.Fatal(err)
	}
	out, err := execTidemark(t, "train", ds, "-o", ck, "--hidden", "16", "--epochs", "3")
	if err != nil {
		t.Fatal(err)
	}
	num := `(\d+\.\d+) ± (\d[\d.e-]*)`
	epochLine := regexp.MustCompile(`epoch +\d+ +train \S+ +val ` + num + ` bits/site`)
	bestLine := regexp.MustCompile(`best epoch \d+, validation ` + num + ` bits/site`)
	check := func(what string, m []string) {
		t.Helper()
		mean, err1 := strconv.ParseFloat(m[1], 64)
		se, err2 := strconv.ParseFloat(m[2], 64)
		if err1 != nil || err2 != nil || !(se > 0 && se < mean) {
			t.Errorf("%s: %q is not a mean with a positive error below it", what, m[0])
		}
	}
	epochs := epochLine.FindAllStringSubmatch(out, -1)
	if len(epochs) != 3 {
		t.Fatalf("found %d epoch lines with an error, expected 3:\n%s", len(epochs), out)
	}
	for _, m := range epochs {
		check("epoch line", m)
	}
	best := bestLine.FindStringSubmatch(out)
	if best == nil {
		t.Fatalf("the closing line gives no validation NLL with its error:\n%s", out)
	}
	check("closing line", best)
	desc, err := execTidemark(t, "inspect", ck)
	if err != nil {
		t.Fatal(err)
	}
	if m := bestLine.FindStringSubmatch(desc); m == nil || !strings.Contains(best[0], m[1]+" ± "+m[2]) {
		t.Errorf("inspect's validation NLL %q differs from train's %q", m, best[0])
	}
}
