package scaling

import (
	"fmt"
	"path/filepath"
	"strconv"
	"strings"
)

// ParseSizes parses a comma-separated list of distinct positive sizes,
// e.g. "8,16,32".
func ParseSizes(s string) ([]int, error) {
	var out []int
	seen := map[int]bool{}
	fields := strings.Split(s, ",")
	for i, f := range fields {
		f = strings.TrimSpace(f)
		v, err := strconv.Atoi(f)
		if err != nil || v <= 0 {
			if len(fields) == 1 {
				return nil, fmt.Errorf("expected a positive whole number or a list like 8,16,32, found %q", f)
			}
			return nil, fmt.Errorf("entry %d of %q: expected a positive whole number, found %q", i+1, s, f)
		}
		if seen[v] {
			return nil, fmt.Errorf("entry %d of %q: size %d is listed twice", i+1, s, v)
		}
		seen[v] = true
		out = append(out, v)
	}
	return out, nil
}

// SeriesPath returns the file name of the size-L member of a size series
// written to out: the size inserted before the extension with a hyphen,
// "film.npz" → "film-L16.npz" (prefix "L"), "chain.npz" → "chain-N12.npz"
// (prefix "N").
func SeriesPath(out, prefix string, size int) string {
	ext := filepath.Ext(out)
	return fmt.Sprintf("%s-%s%d%s", strings.TrimSuffix(out, ext), prefix, size, ext)
}

// SeriesPaths returns the file names of a size series (see SeriesPath); a
// single size keeps out unchanged.
func SeriesPaths(out, prefix string, sizes []int) []string {
	if len(sizes) == 1 {
		return []string{out}
	}
	p := make([]string, len(sizes))
	for i, s := range sizes {
		p[i] = SeriesPath(out, prefix, s)
	}
	return p
}

// Series runs one job per size of the comma-separated list spec, writing
// the size's output to SeriesPaths(out, prefix, sizes): first prepare
// checks every size and its output (so a bad size or an existing file stops
// the series before any work), then run does the jobs in order. An error in
// a later job leaves the earlier, complete outputs and names them.
func Series(spec, out, prefix string, prepare, run func(size int, path string) error) error {
	sizes, err := ParseSizes(spec)
	if err != nil {
		return err
	}
	paths := SeriesPaths(out, prefix, sizes)
	for i, s := range sizes {
		if err := prepare(s, paths[i]); err != nil {
			return err
		}
	}
	for i, s := range sizes {
		if err := run(s, paths[i]); err != nil {
			if i > 0 {
				return fmt.Errorf("%w (already written: %s)", err, strings.Join(paths[:i], ", "))
			}
			return err
		}
	}
	return nil
}
