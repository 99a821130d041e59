//go:build race

package model

// raceEnabled: the race detector makes sync.Pool drop items at random, so
// tests that measure allocation skip under it.
const raceEnabled = true
