package indicator

import "fmt"

// CheckSettings reports the first setting of c outside its range as an
// error that begins with the setting's option name ("refine: …"). Scan
// itself reads a zero Refine or ModelSamples as its default; CheckSettings
// is for values a person typed, where zero is a mistake.
func (c Config) CheckSettings() error {
	for _, s := range []struct {
		option string
		value  int
		least  int
	}{{"refine", c.Refine, 1}, {"bootstrap", c.Bootstrap, 0}, {"window", c.Window, 1}, {"model-samples", c.ModelSamples, 1}} {
		if s.value < s.least {
			return fmt.Errorf("%s: expected an integer ≥ %d, found %d", s.option, s.least, s.value)
		}
	}
	return nil
}
