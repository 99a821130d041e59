// Package textenum holds the text marshalling that tidemark's typed
// enumerations share: string-valued ones (activations, orders, schedules,
// symmetries) are parsed against their list of members, int-valued ones
// (stop reasons, product kinds) are named by a table.
package textenum

import (
	"fmt"
	"slices"
)

// Parse sets *dst to the member of all whose text is b, or returns an error
// naming what was expected (what names the enumeration).
func Parse[T ~string](dst *T, b []byte, all []T, what string) error {
	v := T(b)
	if !slices.Contains(all, v) {
		return fmt.Errorf("%s: expected one of %v, found %q", what, all, b)
	}
	*dst = v
	return nil
}

// Name returns names[i], or "what(i)" when i is out of range.
func Name(names []string, i int, what string) string {
	if i < 0 || i >= len(names) {
		return fmt.Sprintf("%s(%d)", what, i)
	}
	return names[i]
}

// Marshal returns names[i] as text, or an error when i is out of range.
func Marshal(names []string, i int, what string) ([]byte, error) {
	if i < 0 || i >= len(names) {
		return nil, fmt.Errorf("%s: no member %d", what, i)
	}
	return []byte(names[i]), nil
}

// Index sets *dst to the index of b among names, or returns an error naming
// what was expected.
func Index[T ~int](dst *T, b []byte, names []string, what string) error {
	i := slices.Index(names, string(b))
	if i < 0 {
		return fmt.Errorf("%s: expected one of %q, found %q", what, names, b)
	}
	*dst = T(i)
	return nil
}
