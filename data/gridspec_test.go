package data

import (
	"errors"
	"fmt"
	"reflect"
	"strings"
	"testing"
)

func TestParseGridSpec(t *testing.T) {
	cases := []struct {
		in   string
		axes []AxisSpec
	}{
		{"T=1.5:3.5:5", []AxisSpec{{"T", []float64{1.5, 2, 2.5, 3, 3.5}}}},
		{"T=2:2:1", []AxisSpec{{"T", []float64{2}}}},
		{" T = 1;2.5;-3 ", []AxisSpec{{"T", []float64{1, 2.5, -3}}}},
		{"T=2.0:2.6:3,Jy=0.5:1.5:2", []AxisSpec{{"T", []float64{2, 2.3, 2.6}}, {"Jy", []float64{0.5, 1.5}}}},
		{"h_2=1e-1;2E0", []AxisSpec{{"h_2", []float64{0.1, 2}}}},
	}
	for _, c := range cases {
		s, err := ParseGridSpec(c.in)
		if err != nil {
			t.Errorf("%q: %v", c.in, err)
			continue
		}
		if len(s.Axes) != len(c.axes) {
			t.Errorf("%q: %d axes, want %d", c.in, len(s.Axes), len(c.axes))
			continue
		}
		for i, a := range s.Axes {
			w := c.axes[i]
			if a.Name != w.Name || len(a.Values) != len(w.Values) {
				t.Errorf("%q axis %d: %v, want %v", c.in, i, a, w)
				continue
			}
			for j := range a.Values {
				if d := a.Values[j] - w.Values[j]; d > 1e-12 || d < -1e-12 {
					t.Errorf("%q axis %d value %d: %v, want %v", c.in, i, j, a.Values[j], w.Values[j])
				}
			}
		}
	}
}

func TestParseGridSpecEndpointsExact(t *testing.T) {
	s, err := ParseGridSpec("T=0.1:0.7:7")
	if err != nil {
		t.Fatal(err)
	}
	if v := s.Axes[0].Values; v[0] != 0.1 || v[6] != 0.7 {
		t.Fatalf("end points %v, %v; want exactly 0.1 and 0.7", v[0], v[6])
	}
}

func TestParseGridSpecErrors(t *testing.T) {
	cases := []struct {
		in     string
		column int
		want   string
	}{
		{"", 1, "found nothing"},
		{"T", 1, "no '='"},
		{"T=1:2:3,h", 9, "no '='"},
		{"=1:2:3", 1, "parameter name"},
		{"1T=1:2:3", 1, "parameter name"},
		{"T=1:2", 3, "start:stop:count"},
		{"T=a:2:3", 3, "start"},
		{"T=1:b:3", 5, "stop"},
		{"T=1:2:x", 7, "whole number"},
		{"T=1:2:0", 7, "count"},
		{"T=1:2:1", 7, "start = stop"},
		{"T=1:1:5", 7, "start ≠ stop"},
		{"T=1;2;1", 7, "listed twice"},
		{"T=1;2;zz", 7, "finite number"},
		{"T=1;NaN", 5, "finite number"},
		{"T=1:2:3,T=4;5", 9, "given twice"},
		{"T=0:1:2048,h=0:1:2048", 12, "more than"},
	}
	for _, c := range cases {
		_, err := ParseGridSpec(c.in)
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%q: error %v, want a *SpecError", c.in, err)
			continue
		}
		if se.Column != c.column || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), fmt.Sprintf("column %d", c.column)) {
			t.Errorf("%q: %v (column %d); want column %d and %q", c.in, err, se.Column, c.column, c.want)
		}
	}
}

func TestGridSpecPoints(t *testing.T) {
	s, err := ParseGridSpec("T=1;2,h=0;5;7")
	if err != nil {
		t.Fatal(err)
	}
	want := [][]float64{{1, 0}, {1, 5}, {1, 7}, {2, 0}, {2, 5}, {2, 7}}
	if got := s.Points(); !reflect.DeepEqual(got, want) {
		t.Fatalf("Points() = %v, want %v", got, want)
	}
	if !reflect.DeepEqual(s.Names(), []string{"T", "h"}) {
		t.Fatalf("Names() = %v", s.Names())
	}
}

func ExampleParseGridSpec() {
	spec, err := ParseGridSpec("T=2.0:2.6:4,h=0;0.5")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, a := range spec.Axes {
		fmt.Println(a.Name, a.Values)
	}
	fmt.Println(len(spec.Points()), "points, first", spec.Points()[0], "last", spec.Points()[7])

	_, err = ParseGridSpec("T=2.0:2.6")
	fmt.Println(err)
	// Output:
	// T [2 2.2 2.4 2.6]
	// h [0 0.5]
	// 8 points, first [2 0] last [2.6 0.5]
	// grid "T=2.0:2.6", column 3: expected start:stop:count, found "2.0:2.6"
}

func TestParseGridSpecTidyValues(t *testing.T) {
	spec, err := ParseGridSpec("T=1.8:2.8:11")
	if err != nil {
		t.Fatal(err)
	}
	// 1.8 + 0.1·8 in floating point is 2.5999999999999996; the parser rounds
	// to 12 significant digits so files and labels show 2.6.
	if got := spec.Axes[0].Values[8]; got != 2.6 {
		t.Errorf("value 8 = %v, want 2.6", got)
	}
}
