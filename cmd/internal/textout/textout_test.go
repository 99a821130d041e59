package textout

import (
	"os"
	"os/exec"
	"testing"
)

// TestQuote checks that the shell reads every quoted word back unchanged
// (the reference is /bin/sh itself).
func TestQuote(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"plain/path-1.npz", "plain/path-1.npz"},
		{"with space", "'with space'"},
		{"it's", `'it'\''s'`},
		{"", "''"},
		{"$HOME", "'$HOME'"},
	} {
		got := Quote(tc.in)
		if got != tc.want {
			t.Errorf("Quote(%q) = %s, want %s", tc.in, got, tc.want)
		}
		out, err := exec.Command("sh", "-c", "printf %s "+got).Output()
		if err != nil {
			t.Skipf("no sh: %v", err)
		}
		if string(out) != tc.in {
			t.Errorf("sh read %s back as %q, want %q", got, out, tc.in)
		}
	}
}

// ExampleJSON shows the indented form the commands print with --json.
func ExampleJSON() {
	JSON(os.Stdout, map[string]int{"points": 21})
	// Output:
	// {
	//   "points": 21
	// }
}
