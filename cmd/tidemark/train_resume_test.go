package main

import (
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"syscall"
	"testing"
	"time"

	"tidemark/checkpoints"
)

// TestTrainResumeAcceptsSavedValues repeats the command line of a run with
// --resume added: settings given with their saved values are accepted, a
// changed one is refused, and DATA may be left out (the checkpoint's
// recorded dataset is read).
func TestTrainResumeAcceptsSavedValues(t *testing.T) {
	dir := t.TempDir()
	t.Chdir(dir)
	dsPath := ckptTestData(t, dir, "d.npz", 2)
	ck := filepath.Join(dir, "m.ckpt")
	args := []string{"--hidden", "16", "--cond-hidden", "8", "--batch", "64", "--seed", "1", "--augment", "none", "--quiet"}
	if _, err := execTidemark(t, append([]string{"train", "d.npz", "-o", ck, "--epochs", "4", "--stop-after", "1"}, args...)...); err != nil {
		t.Fatal(err)
	}
	if _, err := execTidemark(t, append([]string{"train", dsPath, "--resume", ck, "--epochs", "4", "--stop-after", "1"}, args...)...); err != nil {
		t.Fatalf("resume with the same settings repeated: %v", err)
	}
	if _, err := execTidemark(t, "train", "--resume", ck, "--seed", "2", "--quiet"); err == nil || !strings.Contains(err.Error(), "--seed: cannot be changed") {
		t.Fatalf("resume with another --seed: %v", err)
	}
	if _, err := execTidemark(t, "train", "--resume", ck, "--quiet"); err != nil {
		t.Fatalf("resume without DATA: %v", err)
	}
	c, err := checkpoints.Load(ck)
	if err != nil {
		t.Fatal(err)
	}
	if c.Header.Optimizer.Epoch != 4 {
		t.Errorf("after resuming twice: %d epochs, want 4", c.Header.Optimizer.Epoch)
	}
	if _, err := execTidemark(t, "train", "-o", filepath.Join(dir, "x.ckpt")); err == nil || !strings.Contains(err.Error(), "expected a dataset") {
		t.Errorf("no DATA and no --resume: %v", err)
	}
}

// interruptAfter sends SIGINT to this process once the checkpoint at path
// records more than epochs completed epochs; close stop to give up.
func interruptAfter(path string, epochs int, stop chan struct{}) {
	for {
		select {
		case <-stop:
			return
		case <-time.After(20 * time.Millisecond):
		}
		if c, err := checkpoints.Load(path); err == nil && c.Header.Optimizer.Epoch > epochs {
			syscall.Kill(os.Getpid(), syscall.SIGINT)
			return
		}
	}
}

// TestTrainSignalHintRuns interrupts a training run and runs the command
// its message says continues it, exactly as printed: it must resume from
// the saved epoch (and is interrupted in turn). The message says
// "interrupted" once.
func TestTrainSignalHintRuns(t *testing.T) {
	dir := t.TempDir()
	dsPath := ckptTestData(t, dir, "d.npz", 1)
	ck := filepath.Join(dir, "m.ckpt")
	stop := make(chan struct{})
	go interruptAfter(ck, 0, stop)
	_, err := execTidemark(t, "train", dsPath, "-o", ck, "--hidden", "16", "--epochs", "10000", "--patience", "10000", "--quiet")
	close(stop)
	if !errors.Is(err, errInterrupted) {
		t.Fatalf("error %v, want errInterrupted", err)
	}
	if n := strings.Count(err.Error(), "interrupted"); n != 1 {
		t.Errorf("%q says interrupted %d times", err, n)
	}
	m := regexp.MustCompile(`continue with: (tidemark [^)]*)\)`).FindStringSubmatch(err.Error())
	if m == nil {
		t.Fatalf("no command to continue with in %q", err)
	}
	hint := strings.Fields(m[1])[1:]
	first, err := checkpoints.Load(ck)
	if err != nil {
		t.Fatal(err)
	}
	stop = make(chan struct{})
	go interruptAfter(ck, first.Header.Optimizer.Epoch, stop)
	_, err = execTidemark(t, hint...)
	close(stop)
	if !errors.Is(err, errInterrupted) {
		t.Fatalf("the printed command %q: %v", m[1], err)
	}
	c, err := checkpoints.Load(ck)
	if err != nil {
		t.Fatal(err)
	}
	if c.Header.Optimizer.Epoch <= first.Header.Optimizer.Epoch || len(c.Header.Metrics) != c.Header.Optimizer.Epoch {
		t.Errorf("the printed command continued from epoch %d to %d with %d metrics", first.Header.Optimizer.Epoch, c.Header.Optimizer.Epoch, len(c.Header.Metrics))
	}
}

// TestTrainResumeNamesRecordedDataset resumes without DATA from a folder
// where the recorded (relative) dataset path does not exist: the error says
// the path came from the checkpoint and how to name the data instead.
func TestTrainResumeNamesRecordedDataset(t *testing.T) {
	dir := t.TempDir()
	t.Chdir(dir)
	ckptTestData(t, dir, "d.npz", 2)
	ck := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, "train", "d.npz", "-o", ck, "--hidden", "16", "--epochs", "2", "--stop-after", "1", "--quiet"); err != nil {
		t.Fatal(err)
	}
	t.Chdir(t.TempDir())
	_, err := execTidemark(t, "train", "--resume", ck, "--quiet")
	if err == nil || !strings.Contains(err.Error(), "the dataset recorded in "+ck) || !strings.Contains(err.Error(), "give DATA") {
		t.Errorf("resume from elsewhere: %v", err)
	}
}
