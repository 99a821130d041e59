package chain

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"testing"
)

// runRequest prepares and runs r.
func runRequest(t *testing.T, r Request) *Outcome {
	t.Helper()
	p, err := r.Prepare()
	if err != nil {
		t.Fatalf("%+v: %v", r, err)
	}
	out, err := p.Run(context.Background(), nil)
	if err != nil {
		t.Fatalf("%+v: %v", r, err)
	}
	return out
}

func TestRunWarnsOnTinyGap(t *testing.T) {
	// Without the ∏X sector the ordered Ising chain's two lowest states are
	// split by a gap of order h^N (Pfeuty 1970), far below 1e-8 at h = 0.1.
	for _, tc := range []struct {
		sector string
		warn   bool
	}{{"none", true}, {"even", false}} {
		out := runRequest(t, Request{Sites: 10, Hamiltonian: "-ZZ - h*X", Grid: "h=0.1;0.2", Sector: tc.sector, Basis: "z", Samples: 10, Seed: 1})
		notices := strings.Join(out.Notices, "\n")
		if got := strings.Contains(notices, "warning: the gap in sector "+tc.sector); got != tc.warn {
			t.Errorf("sector %s: warning given = %v, want %v (notices %q)", tc.sector, got, tc.warn, notices)
		}
	}
}

// TestRunIndependentOfThreads: a grid point's stream depends only on (seed,
// grid index) (project rule), and the MPS warm-start runs are fixed by the
// grid alone, so Threads changes neither states nor snapshots.
func TestRunIndependentOfThreads(t *testing.T) {
	for _, r := range []Request{
		{Sites: 4, Hamiltonian: "-XX - YY + 0.3*XY - 0.3*YX - h*Z", Grid: "h=0:1:4", Basis: "random", Samples: 30, Seed: 1},
		{Sites: 20, Solver: SolverByMPS, Open: true, OpenSet: true, Hamiltonian: "-ZZ - h*X", Grid: "h=0.5:1.5:6", Basis: "z", Samples: 30, Seed: 1},
	} {
		var states [2][]uint8
		for i, th := range []int{1, 2} {
			r.Threads = th
			r.MPS = MPSOptions{}.Filled()
			states[i] = runRequest(t, r).Dataset.States
		}
		if string(states[0]) != string(states[1]) {
			t.Errorf("%d sites: snapshots differ between 1 and 2 threads", r.Sites)
		}
	}
}

// TestRunBoundaryDefault: MPS chains are open unless Open is set false
// explicitly; ED chains stay periodic by default.
func TestRunBoundaryDefault(t *testing.T) {
	cases := []struct {
		sites         int
		solver        Solver
		open, openSet bool
		maxBond       int
		want          string
	}{
		{18, SolverAuto, false, false, 0, "open"},
		{18, SolverAuto, false, true, 16, "periodic"},
		{8, SolverAuto, false, false, 0, "periodic"},
		{8, SolverByMPS, false, false, 0, "open"},
	}
	for i, c := range cases {
		mo := MPSOptions{}.Filled()
		if c.maxBond > 0 {
			mo.MaxBond = c.maxBond
		}
		out := runRequest(t, Request{Sites: c.sites, Solver: c.solver, Open: c.open, OpenSet: c.openSet, MPS: mo,
			Hamiltonian: "-ZZ - h*X", Grid: "h=0.8;1.2", Basis: "z", Samples: 10, Seed: 1})
		var sm struct {
			Boundary string `json:"boundary"`
		}
		if err := json.Unmarshal(out.Dataset.Meta.Source, &sm); err != nil {
			t.Fatal(err)
		}
		if sm.Boundary != c.want {
			t.Errorf("case %d %+v: boundary %s, expected %s", i, c, sm.Boundary, c.want)
		}
		if !strings.Contains(out.Description, fmt.Sprintf("%d-site %s chain", c.sites, c.want)) {
			t.Errorf("case %d: description %q does not name the %s boundary", i, out.Description, c.want)
		}
	}
}

func TestPrepareRejects(t *testing.T) {
	base := Request{Hamiltonian: "-ZZ - h*X", Grid: "h=0.5:1.5:3", Basis: "z", Samples: 10, MPS: MPSOptions{}.Filled()}
	with := func(f func(r *Request)) Request { r := base; f(&r); return r }
	cases := []struct {
		name string
		r    Request
		want string
	}{
		{"one site", with(func(r *Request) { r.Sites = 1 }), "sites: expected 2 to 16 sites, found 1"},
		{"too many MPS sites", with(func(r *Request) { r.Sites = 2000 }), "sites: expected 2 to 1024 sites with the MPS solver, found 2000"},
		{"bad cutoff", with(func(r *Request) { r.Sites = 20; r.MPS.Cutoff = 2 }), "cutoff: expected a weight between 0 and 1"},
		{"bad pin", with(func(r *Request) { r.Sites = 20; r.MPS.Pin = -1 }), "pin: "},
		{"sector without symmetry", with(func(r *Request) { r.Sites = 4; r.Hamiltonian = "-ZZ - h*Z"; r.Sector = "even" }), "sector: "},
		{"axis not in H", with(func(r *Request) { r.Sites = 4; r.Grid = "h=0:1:3,g=0;1" }), `grid: axis "g" does not appear in the Hamiltonian`},
		{"parameter not on grid", with(func(r *Request) { r.Sites = 4; r.Hamiltonian = "-ZZ - h*X - g*Z" }), `hamiltonian: parameter "g" is not a grid axis`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := tc.r.Prepare()
			if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
				t.Errorf("error %v, expected it to begin %q", err, tc.want)
			}
		})
	}
	if _, err := ParseSolver("qmc"); err == nil || err.Error() != `solver: expected ed, mps or auto, found "qmc"` {
		t.Errorf("ParseSolver(qmc): %v", err)
	}
}
