//go:build validation

package main

import (
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestDemoTakesWhatItsHelpSays runs the built-in demo at full size on two
// threads and checks the duration its help promises ("under a minute on
// two cores").
func TestDemoTakesWhatItsHelpSays(t *testing.T) {
	if !strings.Contains(newDemoCmd().Long, "under a minute on two\ncores") {
		t.Fatal("demo --help no longer says it takes under a minute; update this test with the new claim")
	}
	start := time.Now()
	if _, err := execTidemark(t, "demo", "-o", filepath.Join(t.TempDir(), "d"), "--quiet", "--threads", "2"); err != nil {
		t.Fatal(err)
	}
	if d := time.Since(start); d > time.Minute {
		t.Errorf("demo took %v, its help says under a minute", d)
	}
}
