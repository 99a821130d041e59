package main

import (
	"os"
	"path/filepath"
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
