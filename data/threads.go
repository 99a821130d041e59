package data

import "runtime"

// Threads returns the number of goroutines a threads setting asks for: n
// when n ≥ 1, and every CPU (runtime.NumCPU) when n ≤ 0. Every threads
// option and argument in tidemark reads its value through it.
func Threads(n int) int {
	if n <= 0 {
		return runtime.NumCPU()
	}
	return n
}
