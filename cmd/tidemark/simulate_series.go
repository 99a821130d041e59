package main

import (
	"fmt"

	"tidemark/indicator/scaling"
)

// simulateSeries runs a simulate command once per size listed in spec (the
// value of flag), each writing its own dataset named by scaling.SeriesPath
// from out and prefix. set fixes the options for one size and output and
// checks them; it is called for every size before run is called for any.
func simulateSeries(flag, spec, out, prefix string, set func(size int, out string) error, run func() error) error {
	if spec == "" {
		return set(0, out) // the command's own check names the missing size
	}
	if _, err := scaling.ParseSizes(spec); err != nil {
		return fmt.Errorf("%s: %w", flag, err)
	}
	return scaling.Series(spec, out, prefix, set, func(size int, path string) error {
		if err := set(size, path); err != nil {
			return err
		}
		return run()
	})
}
