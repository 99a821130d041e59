//go:build validation

package chain

import (
	"math"
	"testing"
)

func TestFisherPeakApproachesCriticalN16(t *testing.T) {
	// h_c = 1 (P. Pfeuty, Ann. Phys. 57, 79 (1970)); the finite-size peak
	// must move towards it from N = 12 to N = 16.
	// A narrower scan than the untagged test keeps the N = 16 run short;
	// both sizes use the same points so the parabola refinement is comparable.
	p12 := fisherPeak(t, 12, 0.8, 1.15, 0.05)
	p16 := fisherPeak(t, 16, 0.8, 1.15, 0.05)
	t.Logf("Fisher peak: N=12 at h=%.4f, N=16 at h=%.4f", p12, p16)
	if math.Abs(p16-1) >= math.Abs(p12-1) {
		t.Errorf("Fisher peak does not approach h_c = 1: N=12 at %.4f, N=16 at %.4f", p12, p16)
	}
}

func TestIsingGroundEnergyPfeutyN16(t *testing.T) {
	s, err := New(Config{Sites: 16, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}})
	if err != nil {
		t.Fatal(err)
	}
	for _, h := range []float64{0.5, 1, 1.5} {
		st, err := s.GroundState([]float64{h})
		if err != nil {
			t.Fatal(err)
		}
		if want := pfeutyE0(16, h); math.Abs(st.E0-want) > 1e-9 { // Pfeuty (1970)
			t.Errorf("h=%v: E0 = %.12f, Pfeuty %.12f", h, st.E0, want)
		}
	}
}
