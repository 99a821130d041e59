package study

import (
	"math"
	"slices"
	"strings"
	"testing"

	"tidemark/indicator"
)

func peak(at, err, h float64, tested bool) indicator.Peak {
	return indicator.Peak{At: []float64{at}, Err: []float64{err}, Height: h, Tested: tested}
}

// TestCombine checks the combined estimate on peaks worked by hand: 2.2,
// 2.3 and 2.4 with errors 0.03, 0.04 and 0.05 have mean 2.3, sample
// standard deviation 0.1 and error √((0.0009+0.0016+0.0025)/3 + 0.01).
// Only each curve's highest tested peak with an error counts, and only the
// named curves.
func TestCombine(t *testing.T) {
	res := &indicator.Result{Curves: []*indicator.Curve{
		{Name: "lbc", Peaks: []indicator.Peak{peak(2.2, 0.03, 1, true), peak(2.9, 0.01, 0.5, true)}},
		{Name: "pbm", Peaks: []indicator.Peak{peak(2.3, 0.04, 1, true), peak(2.0, 0.01, 5, false)}},
		{Name: "fisher", Peaks: []indicator.Peak{peak(2.4, 0.05, 3, true)}},
		{Name: "local", Peaks: []indicator.Peak{peak(2.6, 0.01, 3, true)}},
		{Name: "sl", Peaks: []indicator.Peak{peak(2.6, 0, 3, true)}},
	}}
	e, ok := Combine(res, []string{"lbc", "pbm", "fisher", "sl"})
	want := math.Sqrt((0.0009+0.0016+0.0025)/3 + 0.01)
	if !ok || math.Abs(e.T-2.3) > 1e-12 || math.Abs(e.Spread-0.1) > 1e-12 || math.Abs(e.Err-want) > 1e-12 || !slices.Equal(e.Indicators, []string{"lbc", "pbm", "fisher"}) {
		t.Errorf("Combine = %+v, %v; want T 2.3, spread 0.1, err %v from lbc, pbm, fisher", e, ok, want)
	}
	one, ok := Combine(res, []string{"local"})
	if !ok || one.T != 2.6 || one.Spread != 0 || one.Err != 0.01 {
		t.Errorf("one indicator: %+v, %v", one, ok)
	}
	if _, ok := Combine(res, []string{"sl"}); ok {
		t.Error("a curve whose peak has no error was combined")
	}
}

func TestAgreement(t *testing.T) {
	for _, tc := range []struct {
		a, b  float64
		z     float64
		words string
	}{{2.30, 2.33, 0.6, "agree within their errors"}, {2.30, 2.37, 1.4, "within two standard errors"}, {2.25, 2.29, 0.8, "agree within"}, {2.25, 2.40, 3, "disagree beyond their errors"}} {
		z, words := Agreement(Estimate{T: tc.a, Err: 0.03}, Estimate{T: tc.b, Err: 0.04})
		if math.Abs(z-tc.z) > 1e-9 || !strings.Contains(words, tc.words) {
			t.Errorf("%v against %v: %v, %q; want %v, %q", tc.a, tc.b, z, words, tc.z, tc.words)
		}
	}
}
