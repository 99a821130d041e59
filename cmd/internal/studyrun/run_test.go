package studyrun

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/ising"
)

func loadSmall(t *testing.T, text string) (*Plan, string) {
	t.Helper()
	st, err := Load(writeStudy(t, text))
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "out")
	p, err := NewPlan(st, out)
	if err != nil {
		t.Fatal(err)
	}
	return p, out
}

func allNames(p *Plan) []string {
	var s []string
	for _, st := range Stages {
		for _, u := range p.Units[st] {
			s = append(s, u.Name)
		}
	}
	return s
}

// TestResume stops a local run (through its context) after some units and
// checks that the next run runs exactly the units the first did not
// finish, that a third run runs none, and that changing one scan setting
// reruns only the scans and what follows.
func TestResume(t *testing.T) {
	if testing.Short() {
		t.Skip("trains six small models")
	}
	p, out := loadSmall(t, smallStudy)
	ctx, cancel := context.WithCancel(context.Background())
	const stopAfter = 25 // 21 points and 3 gathers, then the first training unit
	n := 0
	first, err := Run(ctx, p, Options{OnUnit: func(Unit, bool) {
		if n++; n == stopAfter {
			cancel()
		}
	}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("first run: expected to be stopped, got %v", err)
	}
	if len(first.Ran) != stopAfter {
		t.Fatalf("first run ran %d units, want %d", len(first.Ran), stopAfter)
	}
	second, err := Run(context.Background(), p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	all := allNames(p)
	if want := all[stopAfter:]; !slices.Equal(second.Ran, want) {
		t.Errorf("second run ran %v\nwant the unfinished units %v", second.Ran, want)
	}
	if !slices.Equal(second.Skipped, first.Ran) {
		t.Errorf("second run skipped %v, want %v", second.Skipped, first.Ran)
	}
	third, err := Run(context.Background(), p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(third.Ran) != 0 {
		t.Errorf("third run ran %v, want none", third.Ran)
	}
	sum1, err := os.ReadFile(filepath.Join(out, summaryFile))
	if err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(out, reportFile))
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{`href="scans/L4/report.html"`, `href="scans/L6/report.html"`, `href="scans/L8/report.html"`,
		`href="extrapolation/report.html"`, "models/L8.e2.ckpt"} {
		if !strings.Contains(string(page), w) {
			t.Errorf("report.html lacks %s", w)
		}
	}

	// A finished unit whose output was damaged is redone, alone with what
	// depends on it.
	if err := os.WriteFile(filepath.Join(out, modelPath(6, 2)), []byte("damaged"), 0o644); err != nil {
		t.Fatal(err)
	}
	fourth, err := Run(context.Background(), p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"train/L6/m2", "matrix/L6/b0", "scan/L6", "finish"}; !slices.Equal(fourth.Ran, want) {
		t.Errorf("after damaging one model the run redid %v, want %v", fourth.Ran, want)
	}
	sum2, err := os.ReadFile(filepath.Join(out, summaryFile))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(sum1, sum2) {
		t.Error("retraining one member with its own seed changed summary.json")
	}

	// Another scan setting: the scans and the finish rerun, nothing else.
	st2, err := Load(writeStudy(t, strings.Replace(smallStudy, "bootstrap = 10", "bootstrap = 12", 1)))
	if err != nil {
		t.Fatal(err)
	}
	p2, _ := NewPlan(st2, out)
	fifth, err := Run(context.Background(), p2, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"scan/L4", "scan/L6", "scan/L8", "finish"}; !slices.Equal(fifth.Ran, want) {
		t.Errorf("after changing [scan] bootstrap the run redid %v, want %v", fifth.Ran, want)
	}
}

// TestGatherMatchesWholeGrid checks that drawing the grid point by point
// and gathering the points gives, bit for bit, the dataset of one
// simulation of the whole grid with the same seed.
func TestGatherMatchesWholeGrid(t *testing.T) {
	dir := t.TempDir()
	req := ising.Request{Lx: 4, Ly: 3, Grid: "T=1.8:3:4", Samples: 30, Fixed: ising.Couplings{Jx: 1, Jy: 0.5}, Seed: 11, Threads: 2}
	var points []string
	for k := 0; k < 4; k++ {
		path := filepath.Join(dir, fmt.Sprintf("p%d.npz", k))
		if err := simulatePoint(context.Background(), req, k, path); err != nil {
			t.Fatal(err)
		}
		points = append(points, path)
	}
	if err := gather(req, points, filepath.Join(dir, "all.npz")); err != nil {
		t.Fatal(err)
	}
	got, err := data.Read(filepath.Join(dir, "all.npz"))
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := req.Config()
	if err != nil {
		t.Fatal(err)
	}
	res, err := ising.Simulate(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	want, err := res.Dataset(cfg, req.Grid)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got.States, want.States) || !slices.Equal(got.Params, want.Params) {
		t.Error("the gathered snapshots differ from the whole grid's")
	}
	gm, _ := ising.ParseSourceMeta(got.Meta)
	wm, _ := ising.ParseSourceMeta(want.Meta)
	if fmt.Sprint(gm) != fmt.Sprint(wm) {
		t.Errorf("source records differ:\n%v\n%v", gm, wm)
	}
}

// TestSlurmScripts checks the scripts and the order of submission with a
// stand-in for sbatch.
func TestSlurmScripts(t *testing.T) {
	text := smallStudy + "\n[slurm]\npartition = \"short\"\naccount = \"phys\"\n[slurm.train]\nunits_per_task = 4\ntime = \"01:30:00\"\n"
	p, out := loadSmall(t, text)
	var calls []string
	var log bytes.Buffer
	id := 100
	err := p.Slurm(context.Background(), SlurmOptions{Command: []string{"/opt/tidemark", "run", "/s/study.toml", "-o", "/s/out"}, Submit: true, Log: &log,
		run: func(name string, args ...string) ([]byte, error) {
			calls = append(calls, name+" "+strings.Join(args, " "))
			id++
			return []byte(fmt.Sprintf("%d;cluster\n", id)), nil
		}})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		"sbatch --parsable " + filepath.Join(out, "slurm", "simulate.sh"),
		"sbatch --parsable --dependency=afterok:101 " + filepath.Join(out, "slurm", "gather.sh"),
		"sbatch --parsable --dependency=afterok:102 " + filepath.Join(out, "slurm", "train.sh"),
		"sbatch --parsable --dependency=afterok:103 " + filepath.Join(out, "slurm", "matrix.sh"),
		"sbatch --parsable --dependency=afterok:104 " + filepath.Join(out, "slurm", "scan.sh"),
		"sbatch --parsable --dependency=afterok:105 " + filepath.Join(out, "slurm", "finish.sh"),
	}
	if !slices.Equal(calls, want) {
		t.Errorf("sbatch calls:\n%s\nwant\n%s", strings.Join(calls, "\n"), strings.Join(want, "\n"))
	}
	if !strings.Contains(log.String(), "squeue -j 101,102,103,104,105,106") {
		t.Errorf("the log does not say how to follow the jobs:\n%s", log.String())
	}
	b, err := os.ReadFile(filepath.Join(out, "slurm", "train.sh"))
	if err != nil {
		t.Fatal(err)
	}
	script := string(b)
	for _, w := range []string{"#SBATCH --array=0-1\n", "#SBATCH --time=01:30:00\n", "#SBATCH --partition=short\n", "#SBATCH --account=phys\n",
		"#SBATCH --cpus-per-task=1\n", "lo=$((SLURM_ARRAY_TASK_ID * 4))", "if [ \"$hi\" -gt 5 ]; then hi=5; fi",
		`exec /opt/tidemark run /s/study.toml -o /s/out --unit train:"$lo-$hi"`} {
		if !strings.Contains(script, w) {
			t.Errorf("train.sh lacks %q:\n%s", w, script)
		}
	}
	// Every unit is covered exactly once by the tasks' ranges.
	units, err := p.ParseUnits("train:4-5")
	if err != nil || len(units) != 2 || units[0].Name != "train/L8/m1" {
		t.Errorf("train:4-5 gave %v, %v", units, err)
	}
	if _, err := p.ParseUnits("train:4-6"); err == nil {
		t.Error("train:4-6 accepted beyond the 6 units")
	}
}

// TestMinutes checks the time limits written into the scripts: Slurm's
// [D-]HH:MM:SS, rounded up to whole minutes, at least ten minutes.
func TestMinutes(t *testing.T) {
	for _, tc := range []struct {
		sec  float64
		want string
	}{
		{1, "00:10:00"}, {600, "00:10:00"}, {601, "00:11:00"}, {3600, "01:00:00"}, {90000, "1-01:00:00"},
	} {
		if got := minutes(tc.sec); got != tc.want {
			t.Errorf("minutes(%v) = %s, want %s", tc.sec, got, tc.want)
		}
	}
}

// TestImportStudy runs a study of imported datasets: no simulation units,
// and the records name the datasets as the study file does.
func TestImportStudy(t *testing.T) {
	if testing.Short() {
		t.Skip("trains three small models")
	}
	dir := t.TempDir()
	for _, l := range []int{4, 6, 8} {
		cfg, err := ising.Request{Lx: l, Grid: "T=1.5:3.5:5", Samples: 30, Fixed: ising.Couplings{Jx: 1, Jy: 1}, Seed: 5, Threads: 1}.Config()
		if err != nil {
			t.Fatal(err)
		}
		res, err := ising.Simulate(context.Background(), cfg)
		if err != nil {
			t.Fatal(err)
		}
		ds, err := res.Dataset(cfg, "T=1.5:3.5:5")
		if err != nil {
			t.Fatal(err)
		}
		if err := ds.Write(filepath.Join(dir, fmt.Sprintf("snap%d.npz", l)), false); err != nil {
			t.Fatal(err)
		}
	}
	text := "[system]\nkind = \"import\"\nsizes = [4, 6, 8]\ndatasets = [\"snap4.npz\", \"snap6.npz\", \"snap8.npz\"]\n" +
		"[model]\nepochs = 1\nhidden = [8]\n[scan]\nbootstrap = 5\nblock = 64\nindicators = [\"fisher\"]\n[extrapolate]\nnu = 1.0\nbootstrap = 10\n"
	study := filepath.Join(dir, "study.toml")
	if err := os.WriteFile(study, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	st, err := Load(study)
	if err != nil {
		t.Fatal(err)
	}
	p, err := NewPlan(st, filepath.Join(dir, "out"))
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// 150 snapshots per file, read from its header: blocks of 64, 64 and 22.
	want := []string{"train/L4/m1", "train/L6/m1", "train/L8/m1"}
	for _, l := range []int{4, 6, 8} {
		want = append(want, fmt.Sprintf("matrix/L%d/b0", l), fmt.Sprintf("matrix/L%d/b1", l), fmt.Sprintf("matrix/L%d/b2", l))
	}
	want = append(want, "scan/L4", "scan/L6", "scan/L8", "finish")
	if !slices.Equal(res.Ran, want) {
		t.Errorf("ran %v, want %v", res.Ran, want)
	}
	b, err := os.ReadFile(filepath.Join(dir, "out", summaryFile))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"dataset": "snap6.npz"`) {
		t.Errorf("summary.json does not name the imported dataset as the study file does:\n%s", b)
	}
}

// TestChainStudy runs a chain study: one simulation unit per size (the
// solver runs over a size's whole grid), no gather units.
func TestChainStudy(t *testing.T) {
	if testing.Short() {
		t.Skip("trains three small models")
	}
	text := "[system]\nkind = \"chain\"\nsizes = [4, 6, 8]\nhamiltonian = \"-ZZ - h*X\"\ngrid = \"h=0.5:1.5:5\"\nbasis = \"z\"\nsamples = 30\nseed = 1\n" +
		"[model]\nepochs = 1\nhidden = [8]\n[scan]\nbootstrap = 5\nindicators = [\"fisher\"]\n[extrapolate]\nnu = 1.0\nbootstrap = 10\n"
	p, _ := loadSmall(t, text)
	res, err := Run(context.Background(), p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"simulate/L4", "simulate/L6", "simulate/L8", "train/L4/m1", "train/L6/m1", "train/L8/m1",
		"matrix/L4/b0", "matrix/L6/b0", "matrix/L8/b0", "scan/L4", "scan/L6", "scan/L8", "finish"}
	if !slices.Equal(res.Ran, want) {
		t.Errorf("ran %v, want %v", res.Ran, want)
	}
}

// TestStudyWithoutExtrapolation checks that a study whose scans have too
// few peaks to extrapolate (here one indicator on a grid deep in the
// disordered phase, where the exact density of a small lattice changes
// slowly) still ends, with the reason in its summary.json, its report and
// the extrapolation folder's summary.json, and that a rerun skips it.
func TestStudyWithoutExtrapolation(t *testing.T) {
	if testing.Short() {
		t.Skip("trains three small models")
	}
	text := strings.NewReplacer(`grid = "T=1.5:3.5:7"`, `grid = "T=6:9:4"`, "ensemble = 2", "ensemble = 1",
		`indicators = ["fisher", "local"]`, `indicators = ["lbc"]`).Replace(smallStudy)
	p, out := loadSmall(t, text)
	if _, err := Run(context.Background(), p, Options{}); err != nil {
		t.Fatalf("a study without an extrapolation should still end: %v", err)
	}
	why := notExtrapolated(out)
	if !strings.Contains(why, "peak") {
		t.Fatalf("summary.json: not_extrapolated = %q, want the reason", why)
	}
	page, err := os.ReadFile(filepath.Join(out, reportFile))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), "Not extrapolated: ") {
		t.Error("report.html does not say why there is no extrapolation")
	}
	b, err := os.ReadFile(filepath.Join(out, extrapolationDir, summaryFile))
	if err != nil || !strings.Contains(string(b), "not_extrapolated") {
		t.Errorf("extrapolation/summary.json: %v %s", err, b)
	}
	again, err := Run(context.Background(), p, Options{})
	if err != nil || len(again.Ran) != 0 {
		t.Errorf("rerun: ran %v, error %v; want nothing to run", again.Ran, err)
	}
}
