package model

import (
	"encoding/json"
	"testing"
)

// TestActivationText round-trips the activations through a Config's JSON
// and refuses an unknown one.
func TestActivationText(t *testing.T) {
	for _, a := range Activations {
		b, err := json.Marshal(Config{Activation: a})
		if err != nil {
			t.Fatal(err)
		}
		var c Config
		if err := json.Unmarshal(b, &c); err != nil || c.Activation != a || c.CondActivation != "" {
			t.Errorf("%s: read back %q, %q, %v", a, c.Activation, c.CondActivation, err)
		}
		if p, err := ParseActivation(string(a)); err != nil || p != a {
			t.Errorf("ParseActivation(%q) = %q, %v", a, p, err)
		}
	}
	if _, err := ParseActivation("swish"); err == nil {
		t.Error("swish accepted")
	}
	if _, err := ParseActivation(""); err == nil {
		t.Error("no activation accepted")
	}
	for k := productForward; k <= productGradBias; k++ {
		b, err := k.MarshalText()
		var got productKind
		if err != nil || got.UnmarshalText(b) != nil || got != k {
			t.Errorf("product %d: %q, %v, read back %d", k, b, err, got)
		}
	}
}
