package data

import (
	"reflect"
	"strings"
	"testing"
)

func TestParsePoint(t *testing.T) {
	names := []string{"T", "h"}
	for _, tc := range []struct {
		s    string
		want []float64
		err  string
	}{
		{"T=2.3,h=0.1", []float64{2.3, 0.1}, ""},
		{"h=-1,T=2", []float64{2, -1}, ""},
		{"T=2", nil, "h is missing"},
		{"T=2,J=1", nil, `found "J"`},
		{"T=1:2:3,h=0", nil, "one value of T"},
		{"T=", nil, "finite number"},
	} {
		got, err := ParsePoint(tc.s, names)
		if tc.err == "" && (err != nil || !reflect.DeepEqual(got, tc.want)) {
			t.Errorf("%q: %v, %v; want %v", tc.s, got, err, tc.want)
		}
		if tc.err != "" && (err == nil || !strings.Contains(err.Error(), tc.err)) {
			t.Errorf("%q: error %v, want one containing %q", tc.s, err, tc.err)
		}
	}
}

func TestParsePoints(t *testing.T) {
	got, err := ParsePoints("h=0;1,T=2:3:2", []string{"T", "h"})
	want := [][]float64{{2, 0}, {3, 0}, {2, 1}, {3, 1}}
	if err != nil || !reflect.DeepEqual(got, want) {
		t.Errorf("ParsePoints = %v, %v; want %v", got, err, want)
	}
	for _, s := range []string{"T=1:2:3", "T=1,h=0,J=2", "J=1,h=0"} {
		if _, err := ParsePoints(s, []string{"T", "h"}); err == nil || !strings.Contains(err.Error(), "expected the parameters") {
			t.Errorf("%q: error %v", s, err)
		}
	}
}
