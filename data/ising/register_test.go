package ising

import (
	"encoding/json"
	"errors"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
)

func TestRegisteredWithExact(t *testing.T) {
	for _, tc := range []struct {
		lattice []int
		axes    []string
		field   float64
		// want: "enumerable", "kaufman" or "none" (ErrNoExact)
		want string
	}{
		{[]int{4, 4}, []string{"T"}, 0, "enumerable"},
		{[]int{8, 8}, []string{"T"}, 0, "kaufman"},
		{[]int{8, 8}, []string{"T", "Jy"}, 0, "kaufman"},
		{[]int{8, 8}, []string{"T"}, 0.5, "none"},
		{[]int{8, 8}, []string{"h"}, 0, "none"},
	} {
		src, _ := json.Marshal(SourceMeta{Generator: "ising", Lattice: tc.lattice, Boundary: "periodic", Jx: 1, Jy: 1, Temperature: 2, Field: tc.field, Axes: tc.axes})
		m := data.Meta{ParamNames: tc.axes, Alphabet: 2, Lattice: tc.lattice, Source: src}
		s, err := density.ReferenceFor(m)
		if tc.want == "none" {
			if !errors.Is(err, density.ErrNoReference) {
				t.Errorf("%v %v h=%g: err = %v, want ErrNoReference", tc.lattice, tc.axes, tc.field, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%v: %v", tc.lattice, err)
		}
		if s.Sites() != tc.lattice[0]*tc.lattice[1] {
			t.Errorf("%v: sites = %d", tc.lattice, s.Sites())
		}
		_, enum := s.(density.Enumerable)
		_, kauf := s.(*KaufmanSource)
		if (tc.want == "enumerable") != enum || (tc.want == "kaufman") != kauf {
			t.Errorf("%v %v: source %T, want %s", tc.lattice, tc.axes, s, tc.want)
		}
	}
}
