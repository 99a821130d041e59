package ising

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"tidemark/data"
)

// maxValues bounds the snapshot values of one simulation (points × samples × sites).
const maxValues = int64(1) << 31

// Request is a simulation over a grid as a person states it. Its errors
// begin with the name of the field's option ("size: …", "grid: …").
type Request struct {
	// Lx and Ly are the lattice's width and height (Ly 0: Lx).
	Lx, Ly int
	// Grid is the grid text (see data.ParseGridSpec) over one or two of
	// ParamNames.
	Grid string
	// Samples is the number of snapshots per grid point (at least 2).
	Samples int
	// Fixed holds the couplings that are not grid axes; Fixed.T must be
	// above 0 when T is not an axis.
	Fixed Couplings
	// Enumerated asks for exact independent samples (at most
	// MaxEnumeratedSites sites).
	Enumerated bool
	// Seed and Threads are those of Config.
	Seed    uint64
	Threads int
}

// Config checks r and turns it into the Config of Simulate.
func (r Request) Config() (Config, error) {
	var cfg Config
	if r.Lx < 2 {
		return cfg, fmt.Errorf("size: expected a lattice width of at least 2 sites, found %d", r.Lx)
	}
	ly := r.Ly
	if ly == 0 {
		ly = r.Lx
	}
	if ly < 2 {
		return cfg, fmt.Errorf("size-y: expected a lattice height of at least 2 sites, found %d", ly)
	}
	if r.Samples < 2 {
		return cfg, fmt.Errorf("samples: expected at least 2 snapshots per grid point, found %d", r.Samples)
	}
	spec, err := r.gridSpec()
	if err != nil {
		return cfg, err
	}
	names, points := spec.Names(), spec.Points()
	onGrid := map[string]bool{}
	for _, n := range names {
		onGrid[n] = true
	}
	if !onGrid["T"] && !(r.Fixed.T > 0) {
		return cfg, fmt.Errorf("temperature: T is not a grid axis, so expected a temperature above 0, found %v", r.Fixed.T)
	}
	lat := Lattice{Ly: ly, Lx: r.Lx}
	if err := lat.Validate(); err != nil {
		return cfg, fmt.Errorf("size: %w", err)
	}
	if r.Enumerated && lat.N() > MaxEnumeratedSites {
		return cfg, fmt.Errorf("exact-samples: expected at most %d sites, found %d×%d = %d", MaxEnumeratedSites, ly, r.Lx, lat.N())
	}
	total := int64(len(points)) * int64(r.Samples) * int64(lat.N())
	if total > maxValues {
		return cfg, fmt.Errorf("samples: %d points × %d snapshots × %d sites is %d values, expected at most %d", len(points), r.Samples, lat.N(), total, maxValues)
	}
	for _, v := range []struct {
		option string
		x      float64
	}{{"jx", r.Fixed.Jx}, {"jy", r.Fixed.Jy}, {"field", r.Fixed.H}, {"temperature", r.Fixed.T}} {
		if math.IsNaN(v.x) || math.IsInf(v.x, 0) {
			return cfg, fmt.Errorf("%s: expected a finite number, found %v", v.option, v.x)
		}
	}
	return Config{Lattice: lat, Fixed: r.Fixed, Axes: names, Points: points, Samples: r.Samples,
		Enumerated: r.Enumerated, Seed: r.Seed, Threads: r.Threads}, nil
}

// gridSpec parses the grid and checks its axes and temperatures.
func (r Request) gridSpec() (data.GridSpec, error) {
	var spec data.GridSpec
	if r.Grid == "" {
		return spec, errors.New(`grid: expected axes like "T=1.5:3.5:21", found none`)
	}
	spec, err := data.ParseGridSpec(r.Grid)
	if err != nil {
		return spec, fmt.Errorf("grid: %w", err)
	}
	names := spec.Names()
	if len(names) > 2 {
		return spec, fmt.Errorf("grid: expected one or two axes, found %d (%s)", len(names), strings.Join(names, ", "))
	}
	for _, n := range names {
		ok := false
		for _, p := range ParamNames {
			ok = ok || n == p
		}
		if !ok {
			return spec, fmt.Errorf("grid: unknown axis %q: expected T, Jx, Jy or h", n)
		}
	}
	for _, ax := range spec.Axes {
		if ax.Name != "T" {
			continue
		}
		for _, v := range ax.Values {
			if !(v > 0) {
				return spec, fmt.Errorf("grid: axis T: expected temperatures above 0, found %v", v)
			}
		}
	}
	return spec, nil
}

// Notices returns the warnings about a finished simulation, each beginning
// "warning: ": the points whose autocorrelation time did not settle within
// the burn-in.
func (r *Result) Notices(cfg Config) []string {
	var unsettled []string
	for _, p := range r.Points {
		if !p.TauConverged {
			unsettled = append(unsettled, data.FormatPoint(cfg.Axes, p.Params))
		}
	}
	if len(unsettled) == 0 {
		return nil
	}
	return []string{fmt.Sprintf("warning: the autocorrelation time did not settle within the burn-in at %d point(s) (%s); their snapshots may be more correlated than the recorded τ says",
		len(unsettled), strings.Join(unsettled, "; "))}
}

// Describe says what a finished simulation holds, e.g. "16×16 lattice, 21
// points × 1000 snapshots (Monte Carlo, largest τ 3.2 sweeps)".
func (r *Result) Describe(cfg Config) string {
	maxTau := 0.0
	for _, p := range r.Points {
		maxTau = math.Max(maxTau, math.Max(p.TauEnergy, p.TauAbsM))
	}
	method := "Monte Carlo"
	if cfg.Enumerated {
		method = "exact samples"
	}
	return fmt.Sprintf("%d×%d lattice, %d points × %d snapshots (%s, largest τ %.3g sweeps)",
		cfg.Lattice.Ly, cfg.Lattice.Lx, len(cfg.Points), cfg.Samples, method, maxTau)
}
