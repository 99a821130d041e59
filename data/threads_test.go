package data

import (
	"runtime"
	"testing"
)

// TestThreads checks the one meaning of a threads setting.
func TestThreads(t *testing.T) {
	for _, tc := range []struct{ in, want int }{{3, 3}, {1, 1}, {0, runtime.NumCPU()}, {-2, runtime.NumCPU()}} {
		if got := Threads(tc.in); got != tc.want {
			t.Errorf("Threads(%d) = %d, want %d", tc.in, got, tc.want)
		}
	}
}
