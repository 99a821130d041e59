package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/chain"
	"tidemark/indicator/check"
)

// TestChainMPSEndToEnd makes a 32-site random-basis dataset with the MPS
// solver (chosen automatically above 16 sites), trains a small model on it,
// and runs check (NLL − S with S estimated from the samples' exact log p)
// and scan --exact on it. check's NLL − S estimates KL(p‖q)/N, which cannot
// be negative (Gibbs' inequality): a value far below zero, or an entropy
// outside 0 … ln 6, would reveal wrong log-probabilities.
func TestChainMPSEndToEnd(t *testing.T) {
	dir := t.TempDir()
	ds := filepath.Join(dir, "c32.npz")
	out, err := execTidemark(t, "simulate", "chain", "--sites", "32", "--open", "--hamiltonian", "-ZZ - h*X", "--grid", "h=0.6:1.4:5",
		"--basis", "random", "--samples", "400", "--seed", "2", "--quiet", "-o", ds)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out, "largest discarded weight") || !strings.Contains(out, "(MPS)") {
		t.Errorf("simulate chain output lacks the MPS summary:\n%s", out)
	}
	d, err := data.Read(ds)
	if err != nil {
		t.Fatal(err)
	}
	var sm chain.MPSSourceMeta
	if err := json.Unmarshal(d.Meta.Source, &sm); err != nil {
		t.Fatal(err)
	}
	if sm.Solver != "mps" || sm.Sites != 32 || sm.MaxBond != 64 || len(sm.Points) != 5 || sm.Points[2].Bond < 2 {
		t.Fatalf("meta.source %+v", sm)
	}
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, "train", ds, "-o", ck, "--hidden", "32", "--epochs", "2", "--quiet"); err != nil {
		t.Fatal(err)
	}
	out, err = execTidemark(t, "check", ck, "--data", ds, "--json")
	if err != nil {
		t.Fatal(err)
	}
	var rep check.SampledReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("check --json: %v\n%s", err, out)
	}
	if len(rep.Points) != 5 {
		t.Fatalf("check reported %d points, expected 5", len(rep.Points))
	}
	for _, p := range rep.Points {
		if p.EntropyPerSite <= 0 || p.EntropyPerSite >= math.Log(6) {
			t.Errorf("%s: entropy per site %.4f outside (0, ln 6)", p.Label, p.EntropyPerSite)
		}
		if p.NLLMinusEntropy < -4*p.StdErr || p.StdErr <= 0 {
			t.Errorf("%s: NLL − S = %.4f ± %.4f, expected ≥ 0 within 4 standard errors", p.Label, p.NLLMinusEntropy, p.StdErr)
		}
	}
	scan := filepath.Join(dir, "scan.json")
	if _, err := execTidemark(t, "scan", "--data", ds, "--exact", "--quiet", "-o", scan); err != nil {
		t.Fatal(err)
	}
}
