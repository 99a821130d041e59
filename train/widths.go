package train

import (
	"fmt"
	"strconv"
	"strings"
)

// ParseWidths parses comma-separated layer widths such as "256,256"; "" or
// "none" gives an empty list.
func ParseWidths(s string) ([]int, error) {
	s = strings.TrimSpace(s)
	if s == "" || s == "none" {
		return []int{}, nil
	}
	var w []int
	for _, p := range strings.Split(s, ",") {
		v, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || v < 1 {
			return nil, fmt.Errorf("expected comma-separated positive widths like 256,256, found %q", p)
		}
		w = append(w, v)
	}
	return w, nil
}
