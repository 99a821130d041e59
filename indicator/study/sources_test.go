package study

import (
	"strings"
	"testing"

	"tidemark/indicator"
)

func TestParseSLRegions(t *testing.T) {
	cases := []struct {
		in   string
		ok   bool
		a, b [2]float64
	}{
		{"1:1.5,3.5:4", true, [2]float64{1, 1.5}, [2]float64{3.5, 4}},
		{" 0 : 1 , 2:3 ", true, [2]float64{0, 1}, [2]float64{2, 3}},
		{"1:2", false, [2]float64{}, [2]float64{}},
		{"2:1,3:4", false, [2]float64{}, [2]float64{}},
		{"a:1,3:4", false, [2]float64{}, [2]float64{}},
	}
	for _, tc := range cases {
		r, err := ParseSLRegions(tc.in)
		if (err == nil) != tc.ok {
			t.Errorf("%q: error %v", tc.in, err)
			continue
		}
		if tc.ok && (r.A != tc.a || r.B != tc.b) {
			t.Errorf("%q: %+v", tc.in, r)
		}
	}
}

// One model's scan names the indicators with several maxima above the
// noise; an ensemble, an exact density, untested maxima and 2-D scans get
// no note.
func TestSeveralMaximaNote(t *testing.T) {
	peak := func(at float64, tested bool) indicator.Peak {
		return indicator.Peak{At: []float64{at}, Tested: tested}
	}
	two := &indicator.Result{Names: []string{"T"}, Curves: []*indicator.Curve{
		{Name: "lbc", Peaks: []indicator.Peak{peak(2.3, true)}},
		{Name: "pbm", Peaks: []indicator.Peak{peak(2.18, true), peak(2.32, true)}},
		{Name: "local", Peaks: []indicator.Peak{peak(2.2, false), peak(2.3, true)}},
	}}
	flat := &indicator.Result{Names: []string{"T", "J"}, Curves: two.Curves}
	for _, tc := range []struct {
		name    string
		kind    string
		sources int
		res     *indicator.Result
		want    string // "" means no note
	}{
		{"one model", SourceModel, 1, two, "for pbm (T=2.18, T=2.32): a lower maximum"},
		{"ensemble", SourceModel, 2, two, ""},
		{"exact", SourceExact, 1, two, ""},
		{"2-D", SourceModel, 1, flat, ""},
		{"one maximum each", SourceModel, 1, &indicator.Result{Names: []string{"T"}, Curves: two.Curves[:1]}, ""},
	} {
		got := SeveralMaximaNote(tc.kind, tc.sources, tc.res)
		if (tc.want == "") != (got == "") || !strings.Contains(got, tc.want) || strings.Contains(got, "local") {
			t.Errorf("%s: note %q, want one containing %q", tc.name, got, tc.want)
		}
	}
}
