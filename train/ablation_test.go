//go:build ablation

package train

import (
	"context"
	"fmt"
	"os"
	"strconv"
	"strings"
	"testing"

	"tidemark/checkpoints"
	"tidemark/data/density"
	"tidemark/indicator"
	"tidemark/model"
)

// TestAblation trains one architecture variant on exact samples of the 4×4
// Ising model (12 temperatures in [1, 4], two held out, as the training
// tests) and prints, for each indicator, the largest |model − exact| as a
// fraction of the exact curve's range: at the grid points on the data
// snapshots, on a 4× refined grid with model snapshots, and on the refined
// grid with exact sums over all states for both. It asserts nothing; it is
// how the figures in bench/RESULTS.md's "Why the defaults" and in
// TestModelIndicatorsMatchExact were measured. The variant comes from the
// environment:
//
//	PER (snapshots per point, 2000)   EPOCHS (30)   SEEDS (models averaged, 1)
//	NT (temperatures, 12; 23 halves the spacing and keeps the held-out points)
//	SEED (the first training seed, 1)
//	ACT, CONDACT (activations)        HIDDEN, COND (widths, "16,16"; COND=none)
//	FOURIER (1)   SYM=1 (flip symmetry)   WD (weight decay)   LR
//	FILM=1 or 0 (FiLM conditioning on or off)   AVG (weight-averaging decay)
//	AUG (symmetries to augment with, e.g. "translate,mirror,rotate,flip")
//	CKPT (a path pattern with %d for the seed: load the model from it when
//	it exists, else train and save it there)   DUMP=1 (print the fisher curves)
//	HOLD (the --holdout spec, default "T=2.0909090909;2.6363636364" as the
//	training tests; HOLD=none trains on every grid point)
//	SYMEV=d4 or all (score with the mixture of the model over the lattice's
//	point group and the flip, or over the whole group with translations;
//	symeval_ablation_test.go)
//
// Run: ACT=softplus PER=4000 go test -tags ablation ./train -run TestAblation -v
func TestAblation(t *testing.T) {
	temps := linspace(1, 4, envInt(t, "NT", 12))
	ds, src := isingDataset(t, 4, 4, temps, envInt(t, "PER", 2000), 11)
	st := DefaultSettings()
	st.Epochs = envInt(t, "EPOCHS", 30)
	st.Arch.Fourier = envInt(t, "FOURIER", st.Arch.Fourier)
	st.Arch.Symmetric = os.Getenv("SYM") == "1"
	if v := os.Getenv("FILM"); v != "" {
		st.Arch.FiLM = v == "1"
	}
	st.Arch.Activation = model.Activation(envString("ACT", string(st.Arch.Activation)))
	st.Arch.CondActivation = model.Activation(envString("CONDACT", string(st.Arch.CondActivation)))
	st.Arch.Hidden = envWidths(t, "HIDDEN", st.Arch.Hidden)
	st.Arch.CondHidden = envWidths(t, "COND", st.Arch.CondHidden)
	st.WeightDecay = envFloat(t, "WD", st.WeightDecay)
	st.LR = envFloat(t, "LR", st.LR)
	st.Average = envFloat(t, "AVG", st.Average)
	aug, err := ParseAugment(os.Getenv("AUG"))
	if err != nil {
		t.Fatal(err)
	}
	st.Augment = aug
	var models []density.Source
	first := envInt(t, "SEED", 1)
	for s := first; s < first+envInt(t, "SEEDS", 1); s++ {
		st.Seed = uint64(s)
		var ck *checkpoints.Checkpoint
		path := ""
		if pat := os.Getenv("CKPT"); pat != "" {
			path = fmt.Sprintf(pat, s)
			ck, _ = checkpoints.Load(path)
		}
		if ck == nil {
			hold := envString("HOLD", "T=2.0909090909;2.6363636364")
			if hold == "none" {
				hold = ""
			}
			ck, err = Run(context.Background(), ds, Options{Settings: st, Holdout: hold})
			if err != nil {
				t.Fatal(err)
			}
			if path != "" {
				if err := ck.Save(path, true); err != nil {
					t.Fatal(err)
				}
			}
		}
		m, err := ck.Model()
		if err != nil {
			t.Fatal(err)
		}
		var ms density.Source = m
		switch v := os.Getenv("SYMEV"); v {
		case "":
		case "d4", "all":
			ms = newSymModel(m, 4, v == "all")
		default:
			t.Fatalf("SYMEV: expected d4 or all, found %q", v)
		}
		var kl []string
		for _, T := range temps {
			d, err := density.ExhaustiveDivergence(src, ms, []float64{T}, 2, nil)
			if err != nil {
				t.Fatal(err)
			}
			kl = append(kl, fmt.Sprintf("%.4f", d.KL/16))
		}
		t.Logf("seed %d: best epoch %d of %d, KL/site %s", s, ck.Header.BestEpoch, len(ck.Header.Metrics), strings.Join(kl, " "))
		models = append(models, ms)
	}
	for _, pass := range []struct {
		name      string
		refine    int
		exactSums bool
	}{{"grid points", 1, false}, {"refined, model snapshots", 4, false}, {"refined, exact sums", 4, true}} {
		cfg := indicator.Config{Refine: pass.refine, ExactSums: pass.exactSums, ModelSamples: 4000, Threads: 2, Seed: 5}
		mres, err := indicator.Run(context.Background(), models, ds, cfg)
		if err != nil {
			t.Fatal(err)
		}
		// The exact reference takes exact sums whenever the model scan does
		// not use the data snapshots.
		cfg.ExactSums = pass.refine > 1
		eres, err := indicator.Run(context.Background(), []density.Source{src}, ds, cfg)
		if err != nil {
			t.Fatal(err)
		}
		line := pass.name + ":"
		for i, mc := range mres.Curves {
			rel, at := relDiff(mc, eres.Curves[i])
			line += fmt.Sprintf(" %s=%.3f(T=%.2f)", mc.Name, rel, at)
			if os.Getenv("DUMP") != "" && strings.HasPrefix(mc.Name, "fisher") {
				for j := range mc.Val {
					t.Logf("  %s %s T=%.3f model=%.5g exact=%.5g", pass.name, mc.Name, mc.Pos[j][0], mc.Val[j], eres.Curves[i].Val[j])
				}
			}
		}
		t.Log(line)
	}
}

func envString(k, d string) string {
	if v := os.Getenv(k); v != "" {
		return v
	}
	return d
}

func envInt(t *testing.T, k string, d int) int {
	v := os.Getenv(k)
	if v == "" {
		return d
	}
	n, err := strconv.Atoi(v)
	if err != nil {
		t.Fatalf("%s: expected an integer, found %q", k, v)
	}
	return n
}

func envFloat(t *testing.T, k string, d float64) float64 {
	v := os.Getenv(k)
	if v == "" {
		return d
	}
	f, err := strconv.ParseFloat(v, 64)
	if err != nil {
		t.Fatalf("%s: expected a number, found %q", k, v)
	}
	return f
}

func envWidths(t *testing.T, k string, d []int) []int {
	v := os.Getenv(k)
	switch v {
	case "":
		return d
	case "none":
		return []int{}
	}
	var w []int
	for _, f := range strings.Split(v, ",") {
		n, err := strconv.Atoi(f)
		if err != nil {
			t.Fatalf("%s: expected comma-separated widths, found %q", k, v)
		}
		w = append(w, n)
	}
	return w
}
