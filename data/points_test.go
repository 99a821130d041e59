package data

import (
	"context"
	"errors"
	"sync/atomic"
	"testing"
)

func TestForEachPoint(t *testing.T) {
	errA, errB := errors.New("a"), errors.New("b")
	cancelled, cancel := context.WithCancel(context.Background())
	cancel()
	tests := []struct {
		name    string
		ctx     context.Context
		threads int
		fail    map[int]error
		want    error
		calls   int64
	}{
		{"all points, one thread", context.Background(), 1, nil, nil, 7},
		{"all points, more threads than points", context.Background(), 16, nil, nil, 7},
		{"lowest failing point wins", context.Background(), 3, map[int]error{5: errB, 2: errA}, errA, 7},
		{"cancelled before the start", cancelled, 2, nil, context.Canceled, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var calls atomic.Int64
			err := ForEachPoint(tc.ctx, 7, tc.threads, func(k int) error {
				calls.Add(1)
				return tc.fail[k]
			})
			if !errors.Is(err, tc.want) || (tc.want == nil && err != nil) {
				t.Errorf("err = %v, want %v", err, tc.want)
			}
			if calls.Load() != tc.calls {
				t.Errorf("%d calls, want %d", calls.Load(), tc.calls)
			}
		})
	}
}

// TestSamePoint checks the parameter-point tolerance at its edges.
func TestSamePoint(t *testing.T) {
	for _, tc := range []struct {
		a, b []float64
		same bool
	}{
		{[]float64{2.25}, []float64{2.25}, true},
		{[]float64{2.25}, []float64{2.25 + 1e-10}, true},
		{[]float64{2.25}, []float64{2.25 + 1e-8}, false},
		{[]float64{0}, []float64{5e-10}, true},
		{[]float64{1e6}, []float64{1e6 + 5e-4}, true},
		{[]float64{1, 2}, []float64{1}, false},
	} {
		if got := SamePoint(tc.a, tc.b); got != tc.same {
			t.Errorf("SamePoint(%v, %v) = %v", tc.a, tc.b, got)
		}
	}
	if !NamesValue(2.09091, 2.090909090909) || NamesValue(2.091, 2.090909090909) {
		t.Error("NamesValue: six printed digits must name the grid value, four must not (2.091)")
	}
}

// TestForEachWith: every item runs once, each worker makes its scratch once
// (at most threads of them), and no two workers share one.
func TestForEachWith(t *testing.T) {
	const n, threads = 50, 3
	var made atomic.Int64
	seen := make([]atomic.Int64, n)
	err := ForEachWith(context.Background(), n, threads, func() *[]int {
		made.Add(1)
		return new([]int)
	}, func(k int, s *[]int) error {
		*s = append(*s, k) // a data race here if two workers shared s
		seen[k].Add(1)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if m := made.Load(); m < 1 || m > threads {
		t.Errorf("scratch made %d times, expected 1 to %d", m, threads)
	}
	for k := range seen {
		if c := seen[k].Load(); c != 1 {
			t.Errorf("item %d ran %d times", k, c)
		}
	}
}
