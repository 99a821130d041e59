package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"codeberg.org/sbinet/npyio/npz"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/data/safefile"
	"tidemark/model"
	"tidemark/train"
)

// ensureIsingExact registers the Ising enumeration as the exact reference
// of "ising" datasets when no other file has done so yet.
func ensureIsingExact() {
	if !slices.Contains(density.ReferenceGenerators(), "ising") {
		density.RegisterReference("ising", func(m data.Meta) (density.Source, error) {
			s, err := ising.SourceFromMeta(m)
			if err != nil {
				return nil, err
			}
			return s, nil
		})
	}
}

// ckptTestData writes a 3×3 exact-sample Ising dataset at T = 1, 1.6, …, 4.
func ckptTestData(t *testing.T, dir, name string, seed int) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if _, err := execTidemark(t, "simulate", "ising", "--size", "3", "--grid", "T=1:4:6", "--samples", "300",
		"--exact-samples", "--seed", strconv.Itoa(seed), "--quiet", "-o", p); err != nil {
		t.Fatal(err)
	}
	return p
}

var tinyTrain = []string{"--hidden", "16", "--cond-hidden", "8", "--epochs", "3", "--batch", "64", "--ensemble", "1", "--quiet"}

func TestTrainInspectExportScoreCheck(t *testing.T) {
	ensureIsingExact()
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", ck, "--holdout", "T=2.2"}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	// The output exists now: a second run without --force is refused.
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", ck}, tinyTrain...)...); !errors.Is(err, safefile.ErrExists) {
		t.Fatalf("existing output: %v, want ErrExists", err)
	}

	// inspect --json
	out, err := execTidemark(t, "inspect", ck, "--json")
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Kind       string
		Parameters int
		HeldOut    [][]float64 `json:"held_out"`
		BestEpoch  int         `json:"best_epoch"`
		Metrics    []map[string]float64
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("inspect --json: %v\n%s", err, out)
	}
	if rep.Kind != "checkpoint" || len(rep.Metrics) != 3 || len(rep.HeldOut) != 1 || math.Abs(rep.HeldOut[0][0]-2.2) > 1e-12 || rep.BestEpoch < 1 || rep.Parameters == 0 {
		t.Fatalf("inspect --json: %+v", rep)
	}
	for _, k := range []string{"epoch", "train_bits_per_site", "val_bits_per_site", "samples_per_s", "seconds"} {
		if _, ok := rep.Metrics[0][k]; !ok {
			t.Errorf("metrics entry lacks %q: %v", k, rep.Metrics[0])
		}
	}
	if out, err := execTidemark(t, "inspect", ck); err != nil || !strings.Contains(out, "held out") || !strings.Contains(out, "T=2.2") {
		t.Fatalf("inspect: %v\n%s", err, out)
	}

	// export
	wpath := filepath.Join(dir, "w.npz")
	if _, err := execTidemark(t, "export", ck, "-o", wpath); err != nil {
		t.Fatal(err)
	}
	c, err := checkpoints.Load(ck)
	if err != nil {
		t.Fatal(err)
	}
	zr, err := npz.Open(wpath)
	if err != nil {
		t.Fatal(err)
	}
	for _, tn := range c.Best {
		var got []float64
		if err := zr.Read(tn.Name+".npy", &got); err != nil {
			t.Fatalf("export: %s: %v", tn.Name, err)
		}
		if h := zr.Header(tn.Name + ".npy"); !slices.Equal(h.Descr.Shape, tn.Shape) || !slices.Equal(got, tn.Data) {
			t.Fatalf("export: %s has shape %v, want %v, or different values", tn.Name, h.Descr.Shape, tn.Shape)
		}
	}
	var cfg []uint8
	if err := zr.Read("config.npy", &cfg); err != nil || !json.Valid(cfg) {
		t.Fatalf("export config: %v", err)
	}
	if zr.Header("mask.w0.npy") == nil {
		t.Fatalf("export has no mask.w0: %v", zr.Keys())
	}
	zr.Close()

	// score, CSV and NPZ, against the model directly
	ds, err := data.Read(dsPath)
	if err != nil {
		t.Fatal(err)
	}
	m, err := c.Model()
	if err != nil {
		t.Fatal(err)
	}
	want := make([]float64, 1)
	if err := m.LogProb(want, ds.Row(7), ds.ParamRow(7)); err != nil {
		t.Fatal(err)
	}
	csvPath := filepath.Join(dir, "s.csv")
	if _, err := execTidemark(t, "score", ck, dsPath, "-o", csvPath); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil || len(rows) != ds.M+1 || strings.Join(rows[0], ",") != "index,T,logp,bits_per_site" {
		t.Fatalf("score csv: %v, %d rows, header %v", err, len(rows), rows[0])
	}
	if v, _ := strconv.ParseFloat(rows[8][2], 64); v != want[0] {
		t.Fatalf("score csv row 7: %v, want %v", v, want[0])
	}
	npzPath := filepath.Join(dir, "s.npz")
	if _, err := execTidemark(t, "score", ck, dsPath, "--at", "T=2.5", "-o", npzPath); err != nil {
		t.Fatal(err)
	}
	if err := m.LogProb(want, ds.Row(7), []float64{2.5}); err != nil {
		t.Fatal(err)
	}
	zs, err := npz.Open(npzPath)
	if err != nil {
		t.Fatal(err)
	}
	var lp []float64
	if err := zs.Read("logp.npy", &lp); err != nil || len(lp) != ds.M || lp[7] != want[0] {
		t.Fatalf("score --at npz: %v, %d values, logp[7] %v want %v", err, len(lp), lp[7], want[0])
	}
	zs.Close()
	if _, err := execTidemark(t, "score", ck, dsPath, "--at", "h=2.5", "-o", filepath.Join(dir, "x.csv")); err == nil || !strings.Contains(err.Error(), "parameters") {
		t.Fatalf("score --at with a wrong name: %v", err)
	}

	// check against enumeration of the 2^9 states
	out, err = execTidemark(t, "check", ck, "--data", dsPath, "--json", "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	var chk struct {
		Points []struct {
			Params    []float64
			KL        *float64 `json:"kl_per_site"`
			TV        float64
			HeldOut   bool     `json:"held_out"`
			NLLMinusH *float64 `json:"nll_minus_entropy_per_site"`
		}
		Mean *float64 `json:"mean_kl_per_site"`
	}
	if err := json.Unmarshal([]byte(out), &chk); err != nil {
		t.Fatalf("check --json: %v\n%s", err, out)
	}
	if len(chk.Points) != 6 || chk.Mean == nil || *chk.Mean <= 0 {
		t.Fatalf("check: %s", out)
	}
	for _, p := range chk.Points {
		if p.KL == nil || *p.KL < 0 || p.TV <= 0 || p.TV >= 1 || p.NLLMinusH == nil || p.HeldOut != (math.Abs(p.Params[0]-2.2) < 1e-9) {
			t.Fatalf("check point %+v", p)
		}
	}
	if out, err := execTidemark(t, "check", ck, "--data", dsPath, "--quiet"); err != nil || !strings.Contains(out, "held out") {
		t.Fatalf("check table: %v\n%s", err, out)
	}
}

func TestCheckRefusesWithoutExactReference(t *testing.T) {
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", ck}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	ds, err := data.Read(dsPath)
	if err != nil {
		t.Fatal(err)
	}
	ds.Meta.Source = json.RawMessage(`{"generator":"imported"}`)
	imp := filepath.Join(dir, "imp.npz")
	if err := ds.Write(imp, false); err != nil {
		t.Fatal(err)
	}
	_, err = execTidemark(t, "check", ck, "--data", imp, "--quiet")
	if !errors.Is(err, density.ErrNoReference) || !strings.Contains(err.Error(), "imported") {
		t.Fatalf("check on imported data: %v", err)
	}
}

// TestScoreRefusesMismatch checks that a dataset that does not fit the
// model is refused, naming what differs.
func TestScoreRefusesMismatch(t *testing.T) {
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", ck}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	other := filepath.Join(dir, "four.npz")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "4", "--grid", "T=1:4:3", "--samples", "10", "--exact-samples", "--quiet", "-o", other); err != nil {
		t.Fatal(err)
	}
	ds, err := data.Read(dsPath)
	if err != nil {
		t.Fatal(err)
	}
	ds.Meta.ParamNames = []string{"h"}
	renamed := filepath.Join(dir, "renamed.npz")
	if err := ds.Write(renamed, false); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ data, want string }{
		{other, "the model has 9 sites, the dataset 16"},
		{renamed, `parameter names are ["T"], the dataset's ["h"]`},
	} {
		_, err := execTidemark(t, "score", ck, tc.data, "-o", filepath.Join(dir, "s.csv"))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("score %s: %v, want %q", tc.data, err, tc.want)
		}
		if _, serr := os.Stat(filepath.Join(dir, "s.csv")); serr == nil {
			t.Errorf("score %s left an output file behind", tc.data)
		}
	}
}

// TestTrainResumeCommand stops after 2 epochs, resumes to 4 and compares
// with an uninterrupted 4-epoch run.
func TestTrainResumeCommand(t *testing.T) {
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 2)
	full := filepath.Join(dir, "full.ckpt")
	part := filepath.Join(dir, "part.ckpt")
	args := []string{"--hidden", "16", "--cond-hidden", "8", "--epochs", "4", "--batch", "64", "--quiet"}
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", full}, args...)...); err != nil {
		t.Fatal(err)
	}
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", part, "--stop-after", "2"}, args...)...); err != nil {
		t.Fatal(err)
	}
	if _, err := execTidemark(t, "train", dsPath, "--resume", part, "--quiet", "--lr", "0.1"); err == nil || !strings.Contains(err.Error(), "--lr") {
		t.Fatalf("resume with a changed --lr: %v", err)
	}
	// The 3×3 lattice's direct connection got the default window: naming
	// it again (or auto) is accepted, another window is refused.
	if _, err := execTidemark(t, "train", dsPath, "--resume", part, "--quiet", "--direct-window", "all"); err == nil || !strings.Contains(err.Error(), "--direct-window") {
		t.Fatalf("resume with a changed --direct-window: %v", err)
	}
	if _, err := execTidemark(t, "train", dsPath, "--resume", part, "--quiet", "--direct-window", "auto", "--stop-after", "1"); err != nil {
		t.Fatal(err)
	}
	if _, err := execTidemark(t, "train", dsPath, "--resume", part, "--quiet", "--direct-window", strconv.Itoa(train.DefaultDirectWindow)); err != nil {
		t.Fatal(err)
	}
	a, err := checkpoints.Load(full)
	if err != nil {
		t.Fatal(err)
	}
	b, err := checkpoints.Load(part)
	if err != nil {
		t.Fatal(err)
	}
	if m := b.Header.Model; m.DirectWindow != train.DefaultDirectWindow || !slices.Equal(m.Lattice, []int{3, 3}) {
		t.Errorf("model of a 3×3 lattice: direct window %d on %v, want %d on [3 3]", m.DirectWindow, m.Lattice, train.DefaultDirectWindow)
	}
	if len(b.Header.Metrics) != 4 || b.Header.Metrics[3].ValBitsPerSite != a.Header.Metrics[3].ValBitsPerSite {
		t.Fatalf("resumed: %d epochs, final val %v; uninterrupted %v", len(b.Header.Metrics), b.Header.Metrics[len(b.Header.Metrics)-1].ValBitsPerSite, a.Header.Metrics[3].ValBitsPerSite)
	}
	for i := range a.Last {
		if !slices.Equal(a.Last[i].Data, b.Last[i].Data) {
			t.Fatalf("weights %s differ after resume", a.Last[i].Name)
		}
	}
	other := ckptTestData(t, dir, "other.npz", 3)
	if _, err := execTidemark(t, "train", other, "--resume", part, "-o", filepath.Join(dir, "o.ckpt"), "--quiet"); err == nil || !strings.Contains(err.Error(), "different dataset") {
		t.Fatalf("resume on other data: %v", err)
	}
}

// TestTrainSignal sends SIGINT during training: the command saves the
// state of the last complete epoch and returns errInterrupted (status 130).
func TestTrainSignal(t *testing.T) {
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	done := make(chan struct{})
	go func() {
		// The checkpoint appears after the first epoch, while the command
		// is still listening for signals (it has 10000 epochs to go).
		for {
			select {
			case <-done:
				return
			case <-time.After(20 * time.Millisecond):
			}
			if _, err := os.Stat(ck); err == nil {
				syscall.Kill(os.Getpid(), syscall.SIGINT)
				return
			}
		}
	}()
	_, err := execTidemark(t, "train", dsPath, "-o", ck, "--hidden", "16", "--epochs", "10000", "--patience", "10000", "--quiet")
	close(done)
	if !errors.Is(err, errInterrupted) || !strings.Contains(err.Error(), "--resume") {
		t.Fatalf("error %v, want errInterrupted with a hint to resume", err)
	}
	c, err := checkpoints.Load(ck)
	if err != nil {
		t.Fatal(err)
	}
	if c.Header.Stopped != "interrupted" || c.Header.Optimizer.Epoch < 1 || len(c.Header.Metrics) != c.Header.Optimizer.Epoch {
		t.Fatalf("after SIGINT: stopped %q at epoch %d with %d metrics", c.Header.Stopped, c.Header.Optimizer.Epoch, len(c.Header.Metrics))
	}
}

// TestTrainFloat32Precision trains with --precision float32: the checkpoint
// records it, and the model scores the data like a float64 copy of itself
// to single-precision rounding.
func TestTrainFloat32Precision(t *testing.T) {
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m32.ckpt")
	if _, err := execTidemark(t, append([]string{"train", dsPath, "-o", ck, "--precision", "float32"}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	c, err := checkpoints.Load(ck)
	if err != nil {
		t.Fatal(err)
	}
	m32, err := c.Model()
	if err != nil {
		t.Fatal(err)
	}
	if m32.Cfg.Precision != "float32" {
		t.Fatalf("checkpoint precision %q, want float32", m32.Cfg.Precision)
	}
	cfg := m32.Cfg
	cfg.Precision = "float64"
	m64, err := model.FromWeights(cfg, m32.Weights)
	if err != nil {
		t.Fatal(err)
	}
	ds, err := data.Read(dsPath)
	if err != nil {
		t.Fatal(err)
	}
	n := min(ds.M, 64)
	a, b := make([]float64, n), make([]float64, n)
	lam := ds.Params[:ds.D]
	if err := m32.LogProb(a, ds.States[:n*ds.N], lam); err != nil {
		t.Fatal(err)
	}
	if err := m64.LogProb(b, ds.States[:n*ds.N], lam); err != nil {
		t.Fatal(err)
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > 1e-4*math.Max(1, math.Abs(b[i])) {
			t.Fatalf("snapshot %d: float32 %.8g, float64 %.8g", i, a[i], b[i])
		}
	}
}
