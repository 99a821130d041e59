//go:build !race

package gemm

// raceEnabled: the race detector makes sync.Pool drop items at random.
const raceEnabled = false
