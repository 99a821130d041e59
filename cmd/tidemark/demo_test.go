package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func TestDemoRefusesNonEmptyFolder(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "keep.txt"), []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := execTidemark(t, "demo", "-o", dir, "--quiet")
	if err == nil || !strings.Contains(err.Error(), "not empty") {
		t.Fatalf("non-empty folder: %v", err)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "keep.txt")); string(b) != "x" {
		t.Errorf("the existing file was changed")
	}
	if got := run([]string{"demo", "-o", dir, "--quiet"}); got != exitUsage {
		t.Errorf("exit status %d, want %d", got, exitUsage)
	}
}

func TestDemoRefusesBadSettings(t *testing.T) {
	for _, args := range [][]string{{"--size", "1"}, {"--points", "2"}, {"--t-lo", "3", "--t-hi", "2"}, {"--bootstrap", "0"}} {
		_, err := execTidemark(t, append([]string{"demo", "-o", filepath.Join(t.TempDir(), "d"), "--quiet"}, args...)...)
		if err == nil {
			t.Errorf("%v: no error", args)
		}
	}
}

// TestDemoModelSamplesAsScan checks that the demo would draw as many model
// snapshots per point as scan does by default, and that its help says
// where its fisher_deriv comes from: the peak moves with it (issue 25).
func TestDemoModelSamplesAsScan(t *testing.T) {
	def := newScanCmd().Flags().Lookup("model-samples").DefValue
	if got := strconv.Itoa(defaultDemo().ModelSamples); got != def {
		t.Errorf("demo draws %s model snapshots per point, scan %s by default", got, def)
	}
	if long := newDemoCmd().Long; !strings.Contains(long, "fisher_deriv averages over the data's own snapshots") {
		t.Error("demo --help does not say which snapshots its fisher_deriv averages over")
	}
}
