//go:build !unix

package studyrun

// lockFile does not lock where flock is missing: two runs into one output
// folder are then the user's to avoid.
func lockFile(path string, wait bool) (release func(), err error) { return func() {}, nil }
