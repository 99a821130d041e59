package textenum

import "testing"

type color string

type level int

// TestRoundTrip checks parsing, naming and the errors for bad text and out
// of range values.
func TestRoundTrip(t *testing.T) {
	all := []color{"red", "green"}
	var c color
	if err := Parse(&c, []byte("green"), all, "color"); err != nil || c != "green" {
		t.Errorf("Parse green: %q, %v", c, err)
	}
	if err := Parse(&c, []byte("blue"), all, "color"); err == nil || c != "green" {
		t.Errorf("Parse blue: %q, %v; want an error and no change", c, err)
	}
	names := []string{"low", "high"}
	var l level
	if err := Index(&l, []byte("high"), names, "level"); err != nil || l != 1 {
		t.Errorf("Index high: %d, %v", l, err)
	}
	if err := Index(&l, []byte("mid"), names, "level"); err == nil {
		t.Error("Index mid accepted")
	}
	if got := Name(names, 1, "level"); got != "high" {
		t.Errorf("Name 1 = %q", got)
	}
	if got := Name(names, 5, "level"); got != "level(5)" {
		t.Errorf("Name 5 = %q", got)
	}
	if b, err := Marshal(names, 0, "level"); err != nil || string(b) != "low" {
		t.Errorf("Marshal 0 = %q, %v", b, err)
	}
	if _, err := Marshal(names, -1, "level"); err == nil {
		t.Error("Marshal -1 accepted")
	}
}
