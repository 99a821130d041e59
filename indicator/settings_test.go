package indicator

import "testing"

func TestCheckSettings(t *testing.T) {
	ok := Config{Refine: 1, Window: 1, ModelSamples: 1}
	cases := []struct {
		name string
		edit func(c *Config)
		want string
	}{
		{"valid", func(c *Config) {}, ""},
		{"refine", func(c *Config) { c.Refine = 0 }, "refine: expected an integer ≥ 1, found 0"},
		{"bootstrap", func(c *Config) { c.Bootstrap = -1 }, "bootstrap: expected an integer ≥ 0, found -1"},
		{"window", func(c *Config) { c.Window = 0 }, "window: expected an integer ≥ 1, found 0"},
		{"model samples", func(c *Config) { c.ModelSamples = -5 }, "model-samples: expected an integer ≥ 1, found -5"},
	}
	for _, tc := range cases {
		c := ok
		tc.edit(&c)
		err := c.CheckSettings()
		if got := ""; err != nil {
			got = err.Error()
			if got != tc.want {
				t.Errorf("%s: error %q, expected %q", tc.name, got, tc.want)
			}
		} else if tc.want != "" {
			t.Errorf("%s: no error, expected %q", tc.name, tc.want)
		}
	}
}
