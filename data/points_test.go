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
