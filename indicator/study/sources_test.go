package study

import "testing"

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
