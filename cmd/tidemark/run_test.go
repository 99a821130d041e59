package main

import (
	"bytes"
	"fmt"
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

// TestRunLocalParallel runs one study here and in two processes and checks
// that the two summary.json files are the same bit for bit, and that a
// rerun of a finished study runs nothing. (run_validation_test.go compares
// with Slurm job arrays.)
func TestRunLocalParallel(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study twice")
	}
	dir := runLocal(t)
	local := readSummary(t, filepath.Join(dir, "local"))
	mustRunBin(t, dir, "run", "study.toml", "-o", "par", "--parallel", "2", "--quiet")
	if par := readSummary(t, filepath.Join(dir, "par")); !bytes.Equal(local, par) {
		t.Error("summary.json of --parallel 2 differs from the local run's")
	}
	r := mustRunBin(t, dir, "run", "study.toml", "-o", "par", "--parallel", "2")
	if !strings.Contains(r.stdout, "0 units ran, 37 were up to date") {
		t.Errorf("rerunning a finished study ran units:\n%s", r.stdout)
	}
}

// runLocal writes runStudy into a new folder, runs it there into local/
// and returns the folder.
func runLocal(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "study.toml"), []byte(runStudy), 0o644); err != nil {
		t.Fatal(err)
	}
	r := mustRunBin(t, dir, "run", "study.toml", "-o", "local")
	if !strings.Contains(r.stdout, "[37/37] finish (finish:0): done") || !strings.Contains(r.stdout, "37 units ran, 0 were up to date") {
		t.Errorf("local run's progress lines:\n%s", r.stdout)
	}
	return dir
}

func readSummary(t *testing.T, out string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	return b
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
			if len(stamps) >= 37 {
				t.Fatalf("the run finished before the signal (%d stamps)", len(stamps))
			}
			r := mustRunBin(t, dir, "run", "study.toml", "-o", "out")
			for _, s := range stamps {
				name := strings.ReplaceAll(strings.TrimSuffix(filepath.Base(s), ".json"), "_", "/")
				if !regexp.MustCompile(`(?m)^\[\d+/37\] ` + regexp.QuoteMeta(name) + ` \(\S+\): up to date, skipped$`).MatchString(r.stdout) {
					t.Errorf("the rerun did not skip %s, which the first run finished", name)
				}
			}
			if ran := strings.Count(r.stdout, ": done in"); ran+len(stamps) != 37 {
				t.Errorf("the first run finished %d units, the rerun ran %d: want 37 together\n%s", len(stamps), ran, r.stdout)
			}
		})
	}
}

// TestRunBadStudyFile checks that a bad study file gets one line on stderr
// naming the key and the line, exit status 2, and leaves no output folder.
func TestRunBadStudyFile(t *testing.T) {
	for _, tc := range []struct{ name, from, to, want string }{
		{"unknown key", "epochs = 2", "epochs = 2\nepoch_count = 3", `study.toml:11: unknown key model.epoch_count`},
		{"wrong type", "samples = 40", "samples = 4.5", `study.toml:5: key system.samples: expected an integer, found a number with a fraction`},
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

// TestRunLocked starts a study and, while it runs, a second run into the
// same folder: the second refuses with exit status 2 and one line naming
// the folder and the first run's process id, and writes nothing.
func TestRunLocked(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a small study")
	}
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "study.toml"), []byte(runStudy), 0o644); err != nil {
		t.Fatal(err)
	}
	first := exec.Command(tidemarkBin(t), "run", "study.toml", "-o", "out", "--quiet")
	first.Dir = dir
	if err := first.Start(); err != nil {
		t.Fatal(err)
	}
	defer func() {
		first.Process.Signal(syscall.SIGINT)
		first.Wait()
	}()
	pid := fmt.Sprint(first.Process.Pid)
	for deadline := time.Now().Add(30 * time.Second); ; time.Sleep(2 * time.Millisecond) {
		if b, _ := os.ReadFile(filepath.Join(dir, "out", ".lock")); strings.TrimSpace(string(b)) == pid {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("the first run did not take its lock")
		}
	}
	r := runBin(t, dir, "run", "study.toml", "-o", "out")
	if r.status != 2 {
		t.Errorf("second run: exit status %d, want 2", r.status)
	}
	if want := "run: out: in use by another run (pid " + pid + ")"; strings.Count(r.stderr, "\n") != 1 || !strings.Contains(r.stderr, want) {
		t.Errorf("second run: stderr %q, want one line with %q", r.stderr, want)
	}
}
