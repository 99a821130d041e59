package main

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"syscall"
	"testing"
	"time"
)

// runStudy is a small study: three Ising sizes, two ensemble members each,
// few samples and epochs.
const runStudy = `[system]
kind = "ising"
sizes = [4, 6, 8]
grid = "T=1.5:3.5:7"
samples = 40
seed = 3

[model]
ensemble = 2
epochs = 2
hidden = [16]

[scan]
bootstrap = 10
indicators = ["fisher", "local"]

[extrapolate]
nu = 1.0
bootstrap = 20

[slurm.simulate]
units_per_task = 8
[slurm.train]
units_per_task = 2
`

// TestRunLocalParallelSlurm runs one study here, in two processes and, when
// a Slurm cluster answers, as job arrays, and checks that the three
// summary.json files are the same bit for bit.
func TestRunLocalParallelSlurm(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study three times")
	}
	dir := t.TempDir()
	study := filepath.Join(dir, "study.toml")
	if err := os.WriteFile(study, []byte(runStudy), 0o644); err != nil {
		t.Fatal(err)
	}
	r := mustRunBin(t, dir, "run", "study.toml", "-o", "local")
	if !strings.Contains(r.stdout, "[34/34] finish (finish:0): done") || !strings.Contains(r.stdout, "34 units ran, 0 were up to date") {
		t.Errorf("local run's progress lines:\n%s", r.stdout)
	}
	local := readSummary(t, filepath.Join(dir, "local"))
	mustRunBin(t, dir, "run", "study.toml", "-o", "par", "--parallel", "2", "--quiet")
	if par := readSummary(t, filepath.Join(dir, "par")); !bytes.Equal(local, par) {
		t.Error("summary.json of --parallel 2 differs from the local run's")
	}
	r = mustRunBin(t, dir, "run", "study.toml", "-o", "par", "--parallel", "2")
	if !strings.Contains(r.stdout, "0 units ran, 34 were up to date") {
		t.Errorf("rerunning a finished study ran units:\n%s", r.stdout)
	}

	if reason := slurmAbsent(); reason != "" {
		t.Skipf("the Slurm part skips: %s (.ci/slurm-up.sh starts a one-node cluster)", reason)
	}
	r = mustRunBin(t, dir, "run", "study.toml", "-o", "slurm", "--slurm")
	m := regexp.MustCompile(`squeue -j ([0-9,]+)`).FindStringSubmatch(r.stdout)
	if m == nil {
		t.Fatalf("--slurm printed no job ids:\n%s", r.stdout)
	}
	deadline := time.Now().Add(3 * time.Minute)
	for {
		out, err := exec.Command("squeue", "-h", "-j", m[1]).Output()
		if err == nil && strings.TrimSpace(string(out)) == "" {
			break
		}
		if time.Now().After(deadline) {
			exec.Command("scancel", strings.Split(m[1], ",")...).Run()
			t.Fatalf("the Slurm jobs %s did not finish within 3 minutes", m[1])
		}
		time.Sleep(500 * time.Millisecond)
	}
	if _, err := os.Stat(filepath.Join(dir, "slurm", "summary.json")); err != nil {
		logs, _ := filepath.Glob(filepath.Join(dir, "slurm", "slurm", "logs", "*"))
		for _, l := range logs {
			b, _ := os.ReadFile(l)
			t.Logf("%s:\n%s", l, b)
		}
		t.Fatalf("the Slurm jobs ended without the summary: %v", err)
	}
	if sl := readSummary(t, filepath.Join(dir, "slurm")); !bytes.Equal(local, sl) {
		t.Error("summary.json of --slurm differs from the local run's")
	}
}

func readSummary(t *testing.T, out string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// slurmAbsent says why no Slurm cluster can run the test ("" when one answers).
func slurmAbsent() string {
	if _, err := exec.LookPath("sbatch"); err != nil {
		return "sbatch is not installed"
	}
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	out, err := exec.CommandContext(ctx, "sinfo", "-h", "-o", "%T").Output()
	if err != nil || !regexp.MustCompile(`(?m)^(idle|mixed|allocated)`).Match(out) {
		return "no Slurm cluster answers (sinfo)"
	}
	return ""
}

// TestRunInterrupted stops a run once some units are stamped, with SIGINT
// (exit status 130) and with SIGKILL, and checks that the rerun skips
// exactly the units whose stamps the first run wrote and runs the others.
func TestRunInterrupted(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study twice")
	}
	for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGKILL} {
		t.Run(sig.String(), func(t *testing.T) {
			dir := t.TempDir()
			if err := os.WriteFile(filepath.Join(dir, "study.toml"), []byte(runStudy), 0o644); err != nil {
				t.Fatal(err)
			}
			cmd := exec.Command(tidemarkBin(t), "run", "study.toml", "-o", "out")
			cmd.Dir = dir
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			stampDir := filepath.Join(dir, "out", "stamps")
			for {
				if stamps, _ := filepath.Glob(filepath.Join(stampDir, "*.json")); len(stamps) >= 5 {
					break
				}
				time.Sleep(2 * time.Millisecond)
			}
			cmd.Process.Signal(sig)
			cmd.Wait()
			if code := cmd.ProcessState.ExitCode(); sig == syscall.SIGINT && code != 130 {
				t.Fatalf("run stopped by SIGINT: exit status %d, want 130", code)
			}
			stamps, _ := filepath.Glob(filepath.Join(stampDir, "*.json"))
			if len(stamps) >= 34 {
				t.Fatalf("the run finished before the signal (%d stamps)", len(stamps))
			}
			r := mustRunBin(t, dir, "run", "study.toml", "-o", "out")
			for _, s := range stamps {
				name := strings.ReplaceAll(strings.TrimSuffix(filepath.Base(s), ".json"), "_", "/")
				if !regexp.MustCompile(`(?m)^\[\d+/34\] ` + regexp.QuoteMeta(name) + ` \(\S+\): up to date, skipped$`).MatchString(r.stdout) {
					t.Errorf("the rerun did not skip %s, which the first run finished", name)
				}
			}
			if ran := strings.Count(r.stdout, ": done in"); ran+len(stamps) != 34 {
				t.Errorf("the first run finished %d units, the rerun ran %d: want 34 together\n%s", len(stamps), ran, r.stdout)
			}
		})
	}
}

// TestRunBadStudyFile checks that a bad study file gets one line on stderr
// naming the key and the line, exit status 2, and leaves no output folder.
func TestRunBadStudyFile(t *testing.T) {
	for _, tc := range []struct{ name, from, to, want string }{
		{"unknown key", "epochs = 2", "epochs = 2\nepoch_count = 3", `study.toml:11: unknown key model.epoch_count`},
		{"wrong type", "samples = 40", "samples = 4.5", `study.toml:5: key system.samples: expected an integer, found float`},
		{"missing section", "[scan]\nbootstrap = 10\nindicators = [\"fisher\", \"local\"]\n", "", `missing section [scan]`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			text := strings.Replace(runStudy, tc.from, tc.to, 1)
			if err := os.WriteFile(filepath.Join(dir, "study.toml"), []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			r := runBin(t, dir, "run", "study.toml", "-o", "out")
			if r.status != 2 {
				t.Errorf("exit status %d, want 2", r.status)
			}
			if strings.Count(r.stderr, "\n") != 1 || !strings.Contains(r.stderr, tc.want) {
				t.Errorf("stderr %q: want one line naming %q", r.stderr, tc.want)
			}
			if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
				t.Error("a bad study file left an output folder")
			}
		})
	}
}
