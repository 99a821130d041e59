package train

import (
	"encoding"
	"testing"
)

// TestEnumText round-trips every member of train's enumerations through
// its text and checks that unknown text is refused.
func TestEnumText(t *testing.T) {
	type textValue interface {
		encoding.TextMarshaler
	}
	check := func(v textValue, into encoding.TextUnmarshaler, want string) {
		t.Helper()
		b, err := v.MarshalText()
		if err != nil || string(b) != want {
			t.Errorf("%v: MarshalText %q, %v; want %q", v, b, err, want)
		}
		if err := into.UnmarshalText(b); err != nil {
			t.Errorf("UnmarshalText(%q): %v", b, err)
		}
		if err := into.UnmarshalText([]byte("no such")); err == nil {
			t.Errorf("UnmarshalText accepted %q", "no such")
		}
	}
	for _, o := range Orders {
		var got Order
		check(o, &got, string(o))
		if got != o {
			t.Errorf("order %q read back as %q", o, got)
		}
	}
	for _, s := range Schedules {
		var got Schedule
		check(s, &got, string(s))
		if got != s {
			t.Errorf("schedule %q read back as %q", s, got)
		}
	}
	for r, want := range map[StopReason]string{StopMaxEpochs: "max epochs", StopEarly: "early stopping", StopAfterLimit: "stop-after limit", StopInterrupted: "interrupted"} {
		var got StopReason
		check(r, &got, want)
		if got != r || r.String() != want {
			t.Errorf("stop reason %d: read back %d, String %q", r, got, r.String())
		}
	}
	if _, err := StopReason(99).MarshalText(); err == nil {
		t.Error("StopReason(99) marshalled")
	}
}
