package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"regexp"
	"testing"

	"tidemark/data/ising"
	"tidemark/indicator/check"
)

// TestCheckLargeIsingUsesKaufman runs check on a 6×6 dataset (36 sites, too
// many to enumerate): it reports NLL − S per point, a model trained for one
// epoch sits well above the exact entropy, and the response of its
// log-likelihoods is measured between the 3 pairs of neighbouring points.
func TestCheckLargeIsingUsesKaufman(t *testing.T) {
	dir := t.TempDir()
	ds := filepath.Join(dir, "six.npz")
	ck := filepath.Join(dir, "six.ckpt")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "6", "--grid", "T=1.8:3:4", "--samples", "200", "--seed", "3", "--quiet", "-o", ds); err != nil {
		t.Fatal(err)
	}
	if _, err := execTidemark(t, "train", ds, "-o", ck, "--hidden", "32", "--epochs", "1", "--quiet"); err != nil {
		t.Fatal(err)
	}
	out, err := execTidemark(t, "check", ck, "--data", ds, "--json")
	if err != nil {
		t.Fatal(err)
	}
	text, err := execTidemark(t, "check", ck, "--data", ds)
	if err != nil {
		t.Fatal(err)
	}
	var rep check.KaufmanReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("%v in %q", err, out)
	}
	if len(rep.Points) != 4 || rep.KLPerSite != nil {
		t.Fatalf("points %d, kl %v; want 4 points and no KL", len(rep.Points), rep.KLPerSite)
	}
	for _, p := range rep.Points {
		s, _ := check.KaufmanEntropy(6, 6, ising.Couplings{T: p.Params[0], Jx: 1, Jy: 1})
		if p.EntropyPerSite != s || !(p.StdErr > 0) {
			t.Errorf("%s: entropy %v (want %v), std err %v", p.Label, p.EntropyPerSite, s, p.StdErr)
		}
	}
	sq := 0.0
	for _, p := range rep.Points {
		sq += p.StdErr * p.StdErr
	}
	if want := math.Sqrt(sq) / 4; math.Abs(rep.MeanStdErr-want) > 1e-12 || !regexp.MustCompile(`mean NLL − S per site [+-][0-9.]+ ± [0-9.]+`).MatchString(text) {
		t.Errorf("mean NLL − S standard error %v, want %v from the points' errors; text:\n%s", rep.MeanStdErr, want, text)
	}
	if rep.Response == nil || len(rep.Response.Pairs) != 3 || !regexp.MustCompile(`median slope [0-9.-]+ \(range`).MatchString(text) {
		t.Errorf("response: %+v, want 3 neighbouring pairs in the JSON and a median slope in the text:\n%s", rep.Response, text)
	}
	if rep.MeanNLLMinusS < 0.01 {
		t.Errorf("one epoch of training: mean NLL − S = %v nats per site, expected clearly positive", rep.MeanNLLMinusS)
	}
}
