package checkpoints

import "testing"

func TestWithError(t *testing.T) {
	cases := []struct {
		mean, se float64
		prec     int
		want     string
	}{
		{0.487021, 0.00131, 5, "0.48702 ± 0.0013"},
		{0.487021, 0.00131, 4, "0.4870 ± 0.0013"},
		{0.487021, 0, 5, "0.48702"},
	}
	for _, c := range cases {
		if got := WithError(c.mean, c.se, c.prec); got != c.want {
			t.Errorf("WithError(%v, %v, %d) = %q, want %q", c.mean, c.se, c.prec, got, c.want)
		}
	}
}
