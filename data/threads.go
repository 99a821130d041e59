package data

import "runtime"

// Threads returns the number of goroutines a threads setting asks for: n
// when n ≥ 1, and every CPU (runtime.NumCPU) when n ≤ 0. That is what a
// threads value ≤ 0 means everywhere in tidemark (the commands' --threads
// and model.LogProbMatrix as well); train.Settings and model.NewBatchGraph,
// whose results depend on the count, refuse it instead.
func Threads(n int) int {
	if n <= 0 {
		return runtime.NumCPU()
	}
	return n
}
