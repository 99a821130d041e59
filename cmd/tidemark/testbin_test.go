package main

import (
	"bytes"
	"context"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// The tests that run tidemark as a separate process (crash_test.go,
// catalogue_test.go) share one binary, built on first use and removed when
// the test run ends.
var (
	binOnce sync.Once
	binDir  string
	binPath string
	binErr  error
)

// TestMain removes the shared test binary after the tests ran.
func TestMain(m *testing.M) {
	code := m.Run()
	if binDir != "" {
		os.RemoveAll(binDir)
	}
	os.Exit(code)
}

// tidemarkBin builds the command in this folder once per test run and
// returns the path of the binary.
func tidemarkBin(t *testing.T) string {
	t.Helper()
	binOnce.Do(func() {
		binDir, binErr = os.MkdirTemp("", "tidemark-testbin-")
		if binErr != nil {
			return
		}
		binPath = filepath.Join(binDir, "tidemark")
		out, err := exec.Command("go", "build", "-o", binPath, ".").CombinedOutput()
		if err != nil {
			binErr = errors.New("go build: " + err.Error() + "\n" + string(out))
		}
	})
	if binErr != nil {
		t.Fatalf("building tidemark: %v", binErr)
	}
	return binPath
}

// binResult is what one run of the binary did.
type binResult struct {
	status         int
	stdout, stderr string
}

// runBin runs the binary with args in folder dir (the test's folder when
// empty) and returns its exit status and output. A run that takes longer
// than two minutes is killed and fails the test.
func runBin(t *testing.T, dir string, args ...string) binResult {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, tidemarkBin(t), args...)
	cmd.Dir = dir
	var out, errOut bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errOut
	err := cmd.Run()
	if ctx.Err() != nil {
		t.Fatalf("tidemark %s: still running after 2 minutes; killed", strings.Join(args, " "))
	}
	var ee *exec.ExitError
	if err != nil && !errors.As(err, &ee) {
		t.Fatalf("tidemark %s: %v", strings.Join(args, " "), err)
	}
	return binResult{status: cmd.ProcessState.ExitCode(), stdout: out.String(), stderr: errOut.String()}
}

// mustRunBin is runBin for a run that has to succeed.
func mustRunBin(t *testing.T, dir string, args ...string) binResult {
	t.Helper()
	r := runBin(t, dir, args...)
	if r.status != 0 {
		t.Fatalf("tidemark %s: exit status %d\nstderr: %s", strings.Join(args, " "), r.status, r.stderr)
	}
	return r
}

// tempFiles lists the temporary files safefile.Write leaves in dir when it
// cannot finish (".NAME.tmp-*").
func tempFiles(t *testing.T, dir string) []string {
	t.Helper()
	m, err := filepath.Glob(filepath.Join(dir, ".*.tmp-*"))
	if err != nil {
		t.Fatal(err)
	}
	return m
}
