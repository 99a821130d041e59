//go:build validation

package main

import "testing"

// TestCrashKilledTrainingResumesLong is the long form of
// TestCrashKilledTrainingResumes: 31 kills over a 40-epoch run (about a
// minute), so that many more kills land inside checkpoint writes.
func TestCrashKilledTrainingResumesLong(t *testing.T) {
	crashAndResume(t, 40, 10, 7)
}
