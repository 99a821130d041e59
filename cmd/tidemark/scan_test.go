package main

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator/study"
)

// smallDataset writes a dataset of 4 independent sites, each 1 with
// probability logistic(4(T−1)), at 7 temperatures with 400 samples each: a
// distribution small enough for the histogram, changing fastest at T = 1.
func smallDataset(t *testing.T, dir string) string {
	t.Helper()
	ts := []float64{0.4, 0.6, 0.8, 1.0, 1.2, 1.4, 1.6}
	per, n := 400, 4
	ds, err := data.New(len(ts)*per, n, []string{"T"}, 2, []int{2, 2}, map[string]any{"generator": "imported"})
	if err != nil {
		t.Fatal(err)
	}
	for k, T := range ts {
		p := 1 / (1 + math.Exp(-4*(T-1)))
		rng := rand.New(rand.NewPCG(7, uint64(k)))
		for i := 0; i < per; i++ {
			m := k*per + i
			ds.Params[m] = T
			for j := 0; j < n; j++ {
				if rng.Float64() < p {
					ds.States[m*n+j] = 1
				}
			}
		}
	}
	path := filepath.Join(dir, "small.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestScanCommandHistogram(t *testing.T) {
	dir := t.TempDir()
	in := smallDataset(t, dir)
	out := filepath.Join(dir, "scan")
	msg, err := execTidemark(t, "scan", "--data", in, "--histogram", "--bootstrap", "40", "-o", out, "--quiet", "--threads", "2")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"histogram source", "peak at T=", "caution: An indicator peak marks where"} {
		if !strings.Contains(msg, want) {
			t.Errorf("output lacks %q:\n%s", want, msg)
		}
	}
	for _, f := range []string{"indicators.csv", "summary.json", "lbc.svg", "lbc.png", "local.svg", "fisher.png"} {
		if st, err := os.Stat(filepath.Join(out, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
	csv, _ := os.ReadFile(filepath.Join(out, "indicators.csv"))
	head := strings.SplitN(string(csv), "\n", 2)[0]
	if !strings.HasPrefix(head, "T,sl,sl_err,lbc,lbc_err") {
		t.Errorf("csv header %q", head)
	}
	// 7 grid points + 6 midpoints; the header line and a final newline.
	if n := strings.Count(string(csv), "\n"); n != 1+6 {
		t.Errorf("csv has %d lines, want 7 (the histogram has no curve at grid points)", n)
	}
	var sum struct {
		Source     string   `json:"source"`
		Params     []string `json:"params"`
		Grid       struct{ Points int }
		Indicators map[string]struct {
			Peaks []struct {
				At, Err []float64
			}
		}
		Caution string
	}
	b, _ := os.ReadFile(filepath.Join(out, "summary.json"))
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if sum.Source != "histogram" || sum.Params[0] != "T" || sum.Grid.Points != 7 || sum.Caution == "" {
		t.Errorf("summary %+v", sum)
	}
	// The distribution changes fastest at T = 1 (p = 1/2, where the Fisher
	// information N·a²·p(1−p) of independent sites peaks: common practice);
	// the midpoints nearest it are 0.9 and 1.1.
	lp := sum.Indicators["local"].Peaks
	if len(lp) != 1 || math.Abs(lp[0].At[0]-1) > 0.15 {
		t.Errorf("local peaks %+v, want one near T=1", lp)
	}

	// An existing non-empty folder is refused without --force, untouched.
	if _, err := execTidemark(t, "scan", "--data", in, "--histogram", "-o", out, "--quiet"); err == nil || !strings.Contains(err.Error(), "not empty") {
		t.Fatalf("existing folder without --force: %v", err)
	}
	if b2, _ := os.ReadFile(filepath.Join(out, "summary.json")); string(b2) != string(b) {
		t.Fatal("summary changed without --force")
	}
	if _, err := execTidemark(t, "scan", "--data", in, "--histogram", "--bootstrap", "0", "--indicators", "lbc", "-o", out, "--quiet", "--force"); err != nil {
		t.Fatalf("--force: %v", err)
	}
	if _, err := os.Stat(filepath.Join(out, "local.svg")); err == nil {
		t.Error("--force left a file of the old scan")
	}
}

func TestScanCommandErrors(t *testing.T) {
	dir := t.TempDir()
	in := smallDataset(t, dir)
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"--data", in, "-o", filepath.Join(dir, "a")}, "exactly one density source"},
		{[]string{"--data", in, "--histogram", "--exact", "-o", filepath.Join(dir, "a")}, "exactly one density source"},
		{[]string{"--data", in, "--histogram", "--indicators", "lbc,foo", "-o", filepath.Join(dir, "a")}, `found "foo"`},
		{[]string{"--data", in, "--histogram", "--refine", "2", "-o", filepath.Join(dir, "a")}, "train a model"},
		{[]string{"--data", in, "--histogram", "--sl-regions", "0:1", "-o", filepath.Join(dir, "a")}, "--sl-regions"},
		{[]string{"--data", in, "--model", "x.ckpt", "-o", filepath.Join(dir, "a")}, "x.ckpt: cannot read checkpoint"},
		{[]string{"--data", in, "--exact", "-o", filepath.Join(dir, "a")}, "no exact reference"},
		{[]string{"--data", filepath.Join(dir, "missing.npz"), "--histogram", "-o", filepath.Join(dir, "a")}, "missing.npz"},
	}
	for _, tc := range cases {
		t.Run(tc.want, func(t *testing.T) {
			_, err := execTidemark(t, append([]string{"scan", "--quiet"}, tc.args...)...)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
			if _, err := os.Stat(filepath.Join(dir, "a")); err == nil {
				t.Fatal("a failed scan left an output folder")
			}
		})
	}
}

// registerIsingForScan makes "ising" datasets rebuildable by --exact in this
// test binary, as the ising package's registration will do in the program.
func registerIsingForScan() {
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

func TestScanCommandExactTwoDimensional(t *testing.T) {
	registerIsingForScan()
	dir := t.TempDir()
	in := filepath.Join(dir, "aniso.npz")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "3", "--grid", "T=1:4:7,Jy=0.5:1.5:3", "--samples", "200",
		"--exact-samples", "--seed", "3", "--quiet", "-o", in); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scan")
	msg, err := execTidemark(t, "scan", "--data", in, "--exact", "--exact-sums", "--indicators", "local,fisher", "-o", out, "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(msg, "boundary from") || !strings.Contains(msg, "exact sums") {
		t.Errorf("output:\n%s", msg)
	}
	var sum struct {
		Source     string
		ExactSums  bool `json:"exact_sums"`
		Boundaries []struct {
			Indicator string
			Points    [][]float64
		}
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if sum.Source != "exact" || !sum.ExactSums || len(sum.Boundaries) == 0 {
		t.Errorf("summary: %s", b)
	}
	for _, f := range []string{"local_T.png", "fisher_deriv.svg", "indicators.csv"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Error(err)
		}
	}
}

func TestScanCommandRefineZoom(t *testing.T) {
	registerIsingForScan()
	dir := t.TempDir()
	in := filepath.Join(dir, "film.npz")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "3", "--grid", "T=1:4:7", "--samples", "300",
		"--exact-samples", "--seed", "5", "--quiet", "-o", in); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scan")
	msg, err := execTidemark(t, "scan", "--data", in, "--exact", "--refine", "2", "--zoom", "--model-samples", "300",
		"--bootstrap", "20", "--sl-regions", "1:1.5,3.5:4", "--window", "2", "-o", out, "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(msg, "(13 scanned)") || !strings.Contains(msg, "zoom around T=") {
		t.Errorf("output:\n%s", msg)
	}
	if _, err := os.Stat(filepath.Join(out, "zoom-1.csv")); err != nil {
		t.Error(err)
	}
}

// TestScanModelPointsToExact scans a model on an Ising dataset that has an
// exact reference: the notes (printed and in summary.json) point to
// scan --exact and state the model's response against the exact density,
// one labelled note per model when there are several.
func TestScanModelPointsToExact(t *testing.T) {
	dir := t.TempDir()
	ds := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append([]string{"train", ds, "-o", ck}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scan")
	msg, err := execTidemark(t, "scan", "--model", ck, "--data", ds, "--indicators", "lbc", "--bootstrap", "0", "-o", out, "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"this dataset has an exact reference", "response against the exact density on this dataset's snapshots: median slope"} {
		if !strings.Contains(msg, want) {
			t.Errorf("output lacks %q:\n%s", want, msg)
		}
		if !strings.Contains(string(b), want) {
			t.Errorf("summary.json lacks %q", want)
		}
	}
	// A damaged value in the last snapshot: the scan reads the states block
	// by block, so it finds it late, but it stops with data.Read's message
	// and leaves no output.
	d, err := data.Read(ds)
	if err != nil {
		t.Fatal(err)
	}
	d.States[len(d.States)-1] = 7
	bad := filepath.Join(dir, "bad.npz")
	f, err := os.Create(bad)
	if err == nil {
		err = d.Encode(f)
		f.Close()
	}
	if err != nil {
		t.Fatal(err)
	}
	_, rerr := data.Read(bad)
	_, err = execTidemark(t, "scan", "--model", ck, "--data", bad, "--indicators", "lbc", "--bootstrap", "0", "-o", filepath.Join(dir, "bad"), "--quiet")
	if rerr == nil || err == nil || !strings.Contains(err.Error(), rerr.Error()) {
		t.Errorf("scan of a damaged file: %v; data.Read: %v", err, rerr)
	}
	if _, err := os.Stat(filepath.Join(dir, "bad")); err == nil {
		t.Error("a failed scan left an output folder")
	}
	// Two models: one note each, labelled.
	msg, err = execTidemark(t, "scan", "--model", ck, "--model", ck, "--data", ds, "--indicators", "lbc", "--bootstrap", "0", "-o", filepath.Join(dir, "scan2"), "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"model 1 of 2: response against", "model 2 of 2: response against"} {
		if !strings.Contains(msg, want) {
			t.Errorf("two-model scan output lacks %q:\n%s", want, msg)
		}
	}
}

// TestScanModelBesideExact: --exact beside --model draws the exact curve in
// the model's 1-D picture.
func TestScanModelBesideExact(t *testing.T) {
	dir := t.TempDir()
	ds := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append([]string{"train", ds, "-o", ck}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scan")
	if _, err := execTidemark(t, "scan", "--model", ck, "--exact", "--data", ds, "--indicators", "lbc", "--bootstrap", "0", "-o", out, "--quiet"); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(out, "lbc.svg"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), "exact density (same snapshots)") {
		t.Error("lbc.svg has no exact curve beside the model's")
	}
}

func TestParseMetricScale(t *testing.T) {
	names := []string{"T", "Jy"}
	for _, tc := range []struct {
		in   string
		want []float64
		err  string
	}{
		{"", nil, ""},
		{"Jy=0.5", []float64{1, 0.5}, ""},
		{"T=2, Jy=0.5", []float64{2, 0.5}, ""},
		{"h=1", nil, "expected one of the parameters T, Jy"},
		{"T=0", nil, "expected a positive unit"},
		{"T", nil, "expected name=unit"},
	} {
		got, err := study.ParseMetricScale(tc.in, names)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%q: error %v, want %q", tc.in, err, tc.err)
			}
			continue
		}
		if err != nil || len(got) != len(tc.want) || (len(got) == 2 && (got[0] != tc.want[0] || got[1] != tc.want[1])) {
			t.Errorf("%q: %v, %v; want %v", tc.in, got, err, tc.want)
		}
	}
}

// TestScan2DReferences: a 2-D Ising scan lists Onsager's exact line and the
// curves of a --reference file among the references in summary.json, and
// reports its phases.
func TestScan2DReferences(t *testing.T) {
	dir := t.TempDir()
	ds := filepath.Join(dir, "d.npz")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "3", "--grid", "T=1:4:5,Jy=0.5:1.5:4", "--samples", "50",
		"--exact-samples", "--seed", "1", "--quiet", "-o", ds); err != nil {
		t.Fatal(err)
	}
	ref := filepath.Join(dir, "lines.csv")
	if err := os.WriteFile(ref, []byte("Jy,T\n0.5,2\n1.5,3,guess\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scan")
	msg, err := execTidemark(t, "scan", "--data", ds, "--exact", "--exact-sums", "--indicators", "fisher", "--reference", ref, "--metric-scale", "Jy=0.5", "-o", out, "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(msg, "phases from fisher") || !strings.Contains(msg, "reference lines: 3") {
		t.Errorf("output lacks the phases or the 3 reference lines:\n%s", msg)
	}
	var sum struct {
		Phases struct {
			Count      int
			Labels     []int
			Scale      []float64 `json:"metric_scale"`
			References []struct {
				Name   string
				Points [][]float64
			}
		}
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if len(sum.Phases.Labels) != 20 || len(sum.Phases.Scale) != 2 || sum.Phases.Scale[1] != 0.5 {
		t.Errorf("phases %+v", sum.Phases)
	}
	names := map[string]bool{}
	for _, r := range sum.Phases.References {
		names[r.Name] = true
	}
	// the swapped header puts T first: the file's row "0.5,2" is the point (2, 0.5)
	if !names["Onsager's exact line (infinite lattice)"] || !names[ref] || !names["guess"] {
		t.Errorf("references %v", names)
	}
	for _, r := range sum.Phases.References {
		if r.Name == ref && (len(r.Points) != 1 || r.Points[0][0] != 2 || r.Points[0][1] != 0.5) {
			t.Errorf("reference %s: %v, want [[2 0.5]]", r.Name, r.Points)
		}
	}
}
