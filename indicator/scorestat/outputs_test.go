package scorestat

import (
	"slices"
	"testing"
)

func TestOutputs(t *testing.T) {
	for _, tc := range []struct {
		out       string
		posterior bool
		ext       string
		files     []string
	}{
		{"s.npz", false, ".npz", []string{"s.npz"}},
		{"d/S.CSV", false, ".csv", []string{"d/S.CSV", "d/S.points.CSV"}},
		{"s.csv", true, ".csv", []string{"s.csv", "s.groups.csv"}},
		{"s.txt", false, "", nil},
		{"", false, "", nil},
	} {
		ext, files, err := Outputs(tc.out, tc.posterior)
		if (err != nil) != (tc.ext == "") || ext != tc.ext || !slices.Equal(files, tc.files) {
			t.Errorf("Outputs(%q, %v) = %q, %q, %v; expected %q, %q", tc.out, tc.posterior, ext, files, err, tc.ext, tc.files)
		}
	}
}
