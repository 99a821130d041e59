package chain

import (
	"fmt"
	"math"
)

// scoringLanczos is the solver of a scoring state: a short Krylov space per
// restart, since the start vector is already close to the eigenvector, and
// the same residual tolerance as a ground state (defaultLanczos).
var scoringLanczos = lanczosOptions{krylov: 12, tol: defaultLanczos.tol, restarts: 2000}

// scoringState returns the state LogProb scores snapshots with at λ: the
// ground state of GroundState when it has been asked for at λ (a grid
// point, or a point drawn from), otherwise the lowest state in the sector
// found by Lanczos started from the nearest ground state already computed
// (the same tolerance ‖Hψ − Eψ‖ ≤ 1e-9), without the first excited state
// that GroundState also computes for the gap, and cached per λ.
//
// A scan's ∂λ log p asks for log p at λ ± h around every grid point, h a
// hundredth of the grid spacing (indicator's gradients); from a cold start
// with the gap those solves cost twice a grid point's each and dominated
// the exact scan of a chain. Started from the grid point's state, a few
// short restarts suffice, and inside a (near) degenerate ground space the
// state stays on the grid point's branch, so the finite difference does
// not jump between branches.
func (s *Source) scoringState(lambda []float64) (*State, error) {
	if err := s.cfg.checkLambda(lambda); err != nil {
		return nil, err
	}
	key := fmt.Sprint(lambda)
	s.mu.Lock()
	if _, ok := s.cache[key]; ok {
		s.mu.Unlock()
		return s.GroundState(lambda)
	}
	if s.scoring == nil {
		s.scoring = map[string]*cacheEntry{}
	}
	e := s.scoring[key]
	var near *State
	if e == nil {
		e = &cacheEntry{}
		s.scoring[key] = e
		near = s.nearestLocked(lambda)
	}
	s.mu.Unlock()
	e.once.Do(func() {
		if near == nil {
			e.state, e.err = s.GroundState(lambda)
			return
		}
		e.state, e.err = s.solveFrom(lambda, near)
	})
	return e.state, e.err
}

// nearestLocked returns the finished ground state nearest to λ (Euclidean
// distance in parameter units), or nil. s.mu must be held.
func (s *Source) nearestLocked(lambda []float64) *State {
	var best *State
	bd := math.Inf(1)
	for _, e := range s.cache {
		st := e.done()
		if st == nil {
			continue
		}
		d := 0.0
		for i, v := range st.Lambda {
			d += (v - lambda[i]) * (v - lambda[i])
		}
		if d < bd {
			best, bd = st, d
		}
	}
	return best
}

// done returns the entry's state if its solve has finished without error.
func (e *cacheEntry) done() *State {
	e.mu.Lock()
	defer e.mu.Unlock()
	return e.finished
}

// solveFrom finds the lowest state at λ in the sector by Lanczos started
// from near's amplitudes.
func (s *Source) solveFrom(lambda []float64, near *State) (*State, error) {
	st := &State{Lambda: append([]float64(nil), lambda...), Gap: math.NaN()}
	var err error
	if s.op.real {
		st.E0, st.Residual, st.Real, err = solveFromTyped(s.op, lambda, s.sector, near.Real)
	} else {
		st.E0, st.Residual, st.Complex, err = solveFromTyped(s.op, lambda, s.sector, near.Complex)
	}
	if err != nil {
		return nil, fmt.Errorf("chain: state at %v started from %v: %w", lambda, near.Lambda, err)
	}
	return st, nil
}

func solveFromTyped[T scalar](op *operator, lambda []float64, sector Sector, start []T) (e0, resid float64, psi []T, err error) {
	h := buildMatrix[T](op, lambda)
	g, err := lowest(h, projector[T](op.n, sector), nil, start, scoringLanczos)
	if err != nil {
		return 0, 0, nil, err
	}
	phaseFix(g.vector)
	return g.value, g.residual, g.vector, nil
}
