package model

import "testing"

// TestDirectWindowMask checks which earlier sites reach a site's logits
// through the direct connection: with a window, exactly those within the
// window along every axis (periodic distance), without one all of them.
func TestDirectWindowMask(t *testing.T) {
	for _, tc := range []struct {
		name    string
		lattice []int
		window  int
		a, b    int // input site a (earlier), output site b
		want    bool
	}{
		{"left neighbour", []int{4, 4}, 1, 4, 5, true},
		{"up neighbour", []int{4, 4}, 1, 1, 5, true},
		{"up-right diagonal", []int{4, 4}, 1, 2, 5, true},
		{"two to the left", []int{4, 4}, 1, 4, 6, false},
		{"two to the left, window 2", []int{4, 4}, 2, 4, 6, true},
		{"across the periodic column edge", []int{4, 4}, 1, 7, 8, true},
		{"across the periodic row edge", []int{4, 4}, 1, 1, 13, true},
		{"two rows up", []int{5, 5}, 1, 2, 12, false},
		{"two rows up, window 2", []int{5, 5}, 2, 2, 12, true},
		{"chain, distance 2", []int{8}, 1, 3, 5, false},
		{"chain, distance 1", []int{8}, 1, 4, 5, true},
		{"chain, around the end", []int{8}, 1, 0, 7, true},
		{"no window", []int{5, 5}, 0, 0, 24, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			n := 1
			for _, l := range tc.lattice {
				n *= l
			}
			cfg := DefaultConfig(n, 2, 1, []float64{1}, []float64{3})
			cfg.Hidden = []int{8, 8}
			cfg.Lattice, cfg.DirectWindow = tc.lattice, tc.window
			m, err := New(cfg, 1)
			if err != nil {
				t.Fatal(err)
			}
			mask := m.masks[len(m.masks)-1]
			if got := mask.Data[tc.a*n+tc.b] == 1; got != tc.want {
				t.Errorf("direct mask from site %d to site %d on %v, window %d: got %v, want %v", tc.a, tc.b, tc.lattice, tc.window, got, tc.want)
			}
			if mask.Data[tc.b*n+tc.a] != 0 {
				t.Errorf("direct mask lets the later site %d into site %d", tc.b, tc.a)
			}
		})
	}
}

// TestDirectWindowValidate checks the configurations a window refuses.
func TestDirectWindowValidate(t *testing.T) {
	for _, tc := range []struct {
		name string
		mod  func(*Config)
	}{
		{"negative", func(c *Config) { c.DirectWindow = -1 }},
		{"without direct", func(c *Config) { c.Direct = false; c.DirectWindow = 1 }},
		{"no lattice", func(c *Config) { c.Lattice = nil; c.DirectWindow = 1 }},
		{"lattice of other size", func(c *Config) { c.Lattice = []int{3, 3}; c.DirectWindow = 1 }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := DefaultConfig(16, 2, 1, []float64{1}, []float64{3})
			cfg.Lattice = []int{4, 4}
			tc.mod(&cfg)
			if err := cfg.Validate(); err == nil {
				t.Errorf("Validate accepted %s", tc.name)
			}
		})
	}
}
