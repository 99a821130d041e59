package study

import (
	"testing"

	"tidemark/indicator"
)

// TestAnswer checks the order in which the estimate's indicator is chosen:
// lbc, then pbm, then sl, then the peak with the smallest position error;
// untested peaks and peaks without an error never count.
func TestAnswer(t *testing.T) {
	pk := func(at, err, h float64, tested bool) indicator.Peak {
		return indicator.Peak{At: []float64{at}, Err: []float64{err}, Height: h, Tested: tested}
	}
	curve := func(name string, peaks ...indicator.Peak) *indicator.Curve {
		return &indicator.Curve{Name: name, Peaks: peaks}
	}
	for _, tc := range []struct {
		name   string
		curves []*indicator.Curve
		want   string
		at     float64
		ok     bool
	}{
		{"lbc first", []*indicator.Curve{curve("fisher", pk(2.2, 0.001, 9, true)), curve("lbc", pk(2.3, 0.02, 0.5, true), pk(2.6, 0.01, 0.9, true))}, "lbc", 2.6, true},
		{"pbm when lbc has none", []*indicator.Curve{curve("lbc", pk(2.3, 0.02, 0.5, false)), curve("sl", pk(2.25, 0.01, 1, true)), curve("pbm", pk(2.28, 0.03, 1, true))}, "pbm", 2.28, true},
		{"sl after pbm", []*indicator.Curve{curve("pbm"), curve("sl", pk(2.25, 0.01, 1, true))}, "sl", 2.25, true},
		{"smallest error", []*indicator.Curve{curve("local", pk(2.27, 0.02, 1, true)), curve("fisher", pk(2.29, 0.005, 40, true)), curve("fisher_deriv", pk(2.2, 0, 50, true))}, "fisher", 2.29, true},
		{"none", []*indicator.Curve{curve("lbc"), curve("fisher", pk(2.2, 0.01, 3, false))}, "", 0, false},
	} {
		name, p, ok := Answer(&indicator.Result{Curves: tc.curves})
		if ok != tc.ok || name != tc.want || (ok && p.At[0] != tc.at) {
			t.Errorf("%s: got %q %v %v, want %q at %v (%v)", tc.name, name, p.At, ok, tc.want, tc.at, tc.ok)
		}
	}
}
