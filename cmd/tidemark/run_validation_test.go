//go:build validation

package main

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// TestRunSlurm runs the small study locally and as Slurm job arrays on the
// cluster that answers here (.ci/slurm-up.sh starts one; .ci/run runs this
// test after starting it) and checks that the two summary.json files are
// the same bit for bit. It skips when sbatch is absent or no cluster answers.
func TestRunSlurm(t *testing.T) {
	if reason := slurmAbsent(); reason != "" {
		t.Skipf("%s (.ci/slurm-up.sh starts a one-node cluster)", reason)
	}
	dir := runLocal(t)
	local := readSummary(t, filepath.Join(dir, "local"))
	r := mustRunBin(t, dir, "run", "study.toml", "-o", "slurm", "--slurm")
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
