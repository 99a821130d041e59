package ising

import (
	"strings"
	"testing"
)

func TestRequestConfig(t *testing.T) {
	base := Request{Lx: 4, Grid: "T=1:3:5", Samples: 10, Fixed: Couplings{Jx: 1, Jy: 1}}
	with := func(f func(r *Request)) Request { r := base; f(&r); return r }
	cases := []struct {
		name string
		r    Request
		want string
	}{
		{"narrow", with(func(r *Request) { r.Lx = 1 }), "size: expected a lattice width of at least 2 sites, found 1"},
		{"flat", with(func(r *Request) { r.Ly = 1 }), "size-y: "},
		{"few samples", with(func(r *Request) { r.Samples = 1 }), "samples: "},
		{"no grid", with(func(r *Request) { r.Grid = "" }), "grid: expected axes"},
		{"unknown axis", with(func(r *Request) { r.Grid = "B=0:1:3" }), `grid: unknown axis "B"`},
		{"three axes", with(func(r *Request) { r.Grid = "T=1;2,h=0;1,Jx=1;2" }), "grid: expected one or two axes, found 3"},
		{"cold", with(func(r *Request) { r.Grid = "T=0:1:3" }), "grid: axis T: expected temperatures above 0"},
		{"no temperature", with(func(r *Request) { r.Grid = "h=0:1:3" }), "temperature: T is not a grid axis"},
		{"too many to enumerate", with(func(r *Request) { r.Lx = 5; r.Enumerated = true }), "exact-samples: expected at most 24 sites, found 5×5 = 25"},
		{"infinite field", with(func(r *Request) { r.Fixed.H = 1 / zero() }), "field: expected a finite number"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := tc.r.Config()
			if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
				t.Errorf("error %v, expected it to begin %q", err, tc.want)
			}
		})
	}
	cfg, err := with(func(r *Request) { r.Ly = 3 }).Config()
	if err != nil {
		t.Fatal(err)
	}
	if cfg.Lattice != (Lattice{Ly: 3, Lx: 4}) || len(cfg.Points) != 5 || cfg.Axes[0] != "T" {
		t.Errorf("config %+v", cfg)
	}
}

func zero() float64 { return 0 }

func TestResultNotices(t *testing.T) {
	cfg := Config{Axes: []string{"T"}, Points: [][]float64{{1}, {2}}, Samples: 3, Lattice: Lattice{Ly: 2, Lx: 2}}
	res := &Result{Points: []PointInfo{{Params: []float64{1}, TauConverged: true, TauEnergy: 2}, {Params: []float64{2}, TauAbsM: 5}}}
	n := res.Notices(cfg)
	if len(n) != 1 || !strings.Contains(n[0], "at 1 point(s) (T=2)") {
		t.Errorf("notices %q", n)
	}
	if d := res.Describe(cfg); d != "2×2 lattice, 2 points × 3 snapshots (Monte Carlo, largest τ 5 sweeps)" {
		t.Errorf("description %q", d)
	}
}
