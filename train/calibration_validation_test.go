//go:build validation

package train

import (
	"context"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/model"
)

// calEnv reads an integer knob of TestErrorBarCalibration.
func calEnv(name string, def int) int {
	if v, err := strconv.Atoi(os.Getenv(name)); err == nil && v > 0 {
		return v
	}
	return def
}

// calPrecision is the training precision: train's default, float32, unless
// CAL_PRECISION names another.
func calPrecision() string {
	if p := os.Getenv("CAL_PRECISION"); p != "" {
		return p
	}
	return "float32"
}

// calIndicators are the curves whose highest peaks are compared.
var calIndicators = []string{"lbc", "sl", "pbm", "local", "fisher", "fisher_deriv"}

// calCount tallies one (configuration, indicator) cell of the table.
type calCount struct {
	n, noPeak, in1, in2 int
	absDiff, sigma      []float64
}

// TestErrorBarCalibration measures how often the error bars a scan reports
// for a model's highest peak cover the peak of the exact density on the
// same snapshots: over CAL_DATASETS (default 10) independent Monte Carlo
// datasets of the 16×16 periodic Ising model (17 temperatures in [1.9,
// 2.7], CAL_SAMPLES = 400 snapshots each, seeds 101, 102, …), it trains a
// single model and an ensemble of CAL_K = 3 members (CAL_EPOCHS = 60
// epochs, float32 and otherwise train's defaults, CAL_ARCH=conv for the convolutional
// network), scans with the single model, the first 2 members and all of
// them, and with the exact density of the dataset (Kaufman's partition
// function per snapshot: B. Kaufman, Phys. Rev. 76, 1232 (1949); the
// check's reference), and counts, per indicator, the datasets whose exact
// highest peak lies within 1σ and 2σ of the model's highest peak, σ the
// model's reported peak error. A model without a peak counts as a miss.
// Members differ by seed only, as train --ensemble's do by default;
// CAL_BAG=1 trains them on bootstrap resamples (train --bag).
// Every configuration is reported without and with the unseen-snapshot
// check (Config.Unseen). CAL_AUG=none trains without augmentation,
// CAL_PRECISION sets the precision, CAL_ACT the activation, CAL_K=1 trains the single model alone.
// The bar is 2σ coverage of at least 90% for every indicator; the
// test holds the largest ensemble to it. Measured 2026-12-05 at the
// command's defaults (augmentation, float32, 60 epochs; CAL_K=3; 17 min),
// with fisher_deriv averaged over the data's snapshots: it fails for lbc
// and fisher_deriv — the single model with the unseen check covered 70%
// (lbc, no peak in 1 dataset), 100% (sl, pbm, fisher), 80% (local) and 90%
// (fisher_deriv), the ensemble of 3 covered 60% (lbc, no peak in 4
// datasets), 90% (local), 80% (fisher_deriv) and 100% (sl, pbm, fisher).
// bench/RESULTS.md has the tables, and those of the earlier defaults.
func TestErrorBarCalibration(t *testing.T) {
	nData, samples := calEnv("CAL_DATASETS", 10), calEnv("CAL_SAMPLES", 400)
	epochs, K := calEnv("CAL_EPOCHS", 60), calEnv("CAL_K", 3)
	arch := ArchKind(os.Getenv("CAL_ARCH"))
	configs := []calConfig{{"single", 0}, {"ensemble 2", 2}, {fmt.Sprintf("ensemble %d", K), K}}
	if K < 2 {
		configs = configs[:1]
	}
	// Every configuration is reported twice: its errors without and with
	// the shift of each peak on the snapshots the models did not train on
	// (Config.Unseen; the scan's default for a model of its own data).
	var rows []calConfig
	for _, c := range configs {
		rows = append(rows, c, calConfig{c.name + " +unseen", c.members})
	}
	table := map[string]map[string]*calCount{}
	for _, c := range rows {
		table[c.name] = map[string]*calCount{}
		for _, ind := range calIndicators {
			table[c.name][ind] = &calCount{}
		}
	}
	ctx := context.Background()
	start := time.Now()
	for d := 0; d < nData; d++ {
		ds := calDataset(t, samples, uint64(101+d))
		ref, err := density.ReferenceFor(ds.Meta)
		if err != nil {
			t.Fatal(err)
		}
		exact := calPeaks(t, []density.Source{ref}, ds, nil)
		st := DefaultSettings()
		st.Epochs, st.Arch.Kind = epochs, arch
		if a := os.Getenv("CAL_ACT"); a != "" {
			st.Arch.Activation = model.Activation(a)
		}
		if os.Getenv("CAL_AUG") != "none" {
			// train's default (--augment auto): the symmetries the
			// dataset's source record states.
			sm, err := ising.ParseSourceMeta(ds.Meta)
			if err != nil {
				t.Fatal(err)
			}
			st.Augment = sm.Symmetries()
		}
		st.Arch.Precision = calPrecision()
		single, err := Run(ctx, ds, Options{Settings: st})
		if err != nil {
			t.Fatal(err)
		}
		var cks []*checkpoints.Checkpoint
		if K >= 2 {
			cks, err = RunEnsemble(ctx, ds, Options{Settings: st}, Ensemble{Size: K, Parallel: 2, NoResample: os.Getenv("CAL_BAG") != "1"})
			if err != nil {
				t.Fatal(err)
			}
		}
		unseen, err := UnseenRows(ds, single)
		if err != nil {
			t.Fatal(err)
		}
		var members []density.Source
		for _, ck := range append(cks, single) {
			m, err := ck.Model()
			if err != nil {
				t.Fatal(err)
			}
			members = append(members, m)
		}
		for i, c := range rows {
			if i%2 == 1 {
				continue
			}
			srcs := members[:max(c.members, 1)]
			if c.members == 0 {
				srcs = members[len(cks):]
			}
			// The members share the split, and the single model's seed is
			// the ensemble's base seed, so its unseen rows are theirs.
			got := calPeaks(t, srcs, ds, unseen)
			for v, name := range []string{c.name, rows[i+1].name} {
				for _, ind := range calIndicators {
					e, ok := exact[ind]
					if !ok {
						continue
					}
					cc := table[name][ind]
					cc.n++
					m, ok := got[ind]
					if !ok {
						cc.noPeak++
						continue
					}
					sigma := m.Err[0]
					if u := m.Unseen; v == 0 && u != nil {
						sigma = math.Sqrt(math.Max(sigma*sigma-u.Added*u.Added, 0))
					}
					diff := math.Abs(m.At[0] - e.At[0])
					cc.absDiff, cc.sigma = append(cc.absDiff, diff), append(cc.sigma, sigma)
					if diff <= sigma {
						cc.in1++
					}
					if diff <= 2*sigma {
						cc.in2++
					}
				}
			}
		}
		fmt.Fprintf(os.Stderr, "calibration: dataset %d of %d done after %v\n", d+1, nData, time.Since(start).Round(time.Second))
		// The table so far, so that a run stopped early still says something.
		fmt.Fprint(os.Stderr, calTable(table, rows, d+1, samples, epochs, arch, time.Since(start)))
	}
	fmt.Fprint(os.Stdout, calTable(table, rows, nData, samples, epochs, arch, time.Since(start)))
	last := rows[len(rows)-1].name
	for _, ind := range calIndicators {
		if cc := table[last][ind]; cc.n > 0 && pct(cc.in2, cc.n) < 90 {
			t.Errorf("%s, %s: the exact peak lies within 2σ in %d of %d datasets, below the bar of 90%%", last, ind, cc.in2, cc.n)
		}
	}
}

// calTable prints the coverage table of TestErrorBarCalibration after
// nData datasets.
func calTable(table map[string]map[string]*calCount, configs []calConfig, nData, samples, epochs int, arch ArchKind, took time.Duration) string {
	var b strings.Builder
	fmt.Fprintf(&b, "16×16 Ising, %d datasets × 17 temperatures × %d snapshots, %d epochs, arch %q, resampling %v, augment %q, precision %q, activation %q, %v\n", nData, samples, epochs, arch, os.Getenv("CAL_BAG") == "1", os.Getenv("CAL_AUG"), calPrecision(), os.Getenv("CAL_ACT"), took.Round(time.Second))
	fmt.Fprintf(&b, "%-13s %-12s %3s %7s %7s %7s %10s %10s\n", "indicator", "errors of", "n", "no peak", "in 1σ", "in 2σ", "mean |Δ|", "median σ")
	for _, ind := range calIndicators {
		for _, c := range configs {
			cc := table[c.name][ind]
			fmt.Fprintf(&b, "%-13s %-12s %3d %7d %6.0f%% %6.0f%% %10.4f %10.4f\n", ind, c.name, cc.n, cc.noPeak,
				pct(cc.in1, cc.n), pct(cc.in2, cc.n), mean(cc.absDiff), median(cc.sigma))
		}
	}
	return b.String()
}

// calConfig is one way of reporting errors: the single model, or the
// first members of the ensemble.
type calConfig struct {
	name    string
	members int // 0: the single model
}

func pct(a, n int) float64 {
	if n == 0 {
		return math.NaN()
	}
	return 100 * float64(a) / float64(n)
}

func mean(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}

func median(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	w := append([]float64(nil), v...)
	for i := range w {
		for j := i + 1; j < len(w); j++ {
			if w[j] < w[i] {
				w[i], w[j] = w[j], w[i]
			}
		}
	}
	return w[len(w)/2]
}

// calDataset simulates one 16×16 Ising dataset by Monte Carlo.
func calDataset(t *testing.T, samples int, seed uint64) *data.Dataset {
	t.Helper()
	const grid = "T=1.9:2.7:17"
	cfg, err := ising.Request{Lx: 16, Grid: grid, Samples: samples, Fixed: ising.Couplings{Jx: 1, Jy: 1}, Seed: seed, Threads: 2}.Config()
	if err != nil {
		t.Fatal(err)
	}
	res, err := ising.Simulate(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	ds, err := res.Dataset(cfg, grid)
	if err != nil {
		t.Fatal(err)
	}
	return ds
}

// calPeaks scans ds with srcs (100 bootstrap replicates, the scan's
// default) and returns each indicator's highest peak.
func calPeaks(t *testing.T, srcs []density.Source, ds *data.Dataset, unseen []bool) map[string]indicator.Peak {
	t.Helper()
	res, err := indicator.Run(context.Background(), srcs, ds, indicator.Config{Bootstrap: 100, ModelSamples: 1000, Threads: 2, Seed: 1, Unseen: unseen})
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]indicator.Peak{}
	for _, c := range res.Curves {
		for _, p := range c.Peaks {
			if q, ok := out[c.Name]; !ok || p.Height > q.Height {
				out[c.Name] = p
			}
		}
	}
	return out
}
