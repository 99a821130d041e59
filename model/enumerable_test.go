package model

import "testing"

func TestEnumerable(t *testing.T) {
	for _, tc := range []struct {
		n, q int
		want bool
	}{
		{16, 2, true},  // 4×4 Ising: 65536 states
		{20, 2, true},  // 2^20, the limit
		{21, 2, false}, // 2^21
		{12, 3, true},  // 531441
		{13, 3, false}, // 1594323
	} {
		cfg := DefaultConfig(tc.n, tc.q, 1, []float64{0}, []float64{1})
		m, err := New(cfg, 1)
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Enumerable(); got != tc.want {
			t.Errorf("N=%d q=%d: Enumerable() = %v, want %v", tc.n, tc.q, got, tc.want)
		}
	}
}
