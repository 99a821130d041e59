package train

import (
	"context"
	"strings"
	"testing"
)

// TestConvRun trains the conv network (Arch.Kind "conv") briefly on exact
// 4×4 Ising samples and checks that the checkpoint records the lattice and
// window, that validation improves on the first epoch's, and that the
// settings reject a snake order and a bad kind.
func TestConvRun(t *testing.T) {
	ds, _ := isingDataset(t, 4, 4, linspace(1.5, 3.5, 5), 400, 3)
	st := DefaultSettings()
	st.Arch.Kind = ArchConv
	st.Arch.Hidden = []int{6, 6}
	st.Epochs = 4
	st.Threads = 2
	ck, err := Run(context.Background(), ds, Options{Settings: st})
	if err != nil {
		t.Fatal(err)
	}
	c := ck.Header.Model.Conv
	if c == nil || c.Height != 4 || c.Width != 4 || c.Window != DefaultConvWindow {
		t.Fatalf("checkpoint conv configuration %+v, want 4×4 with window %d", c, DefaultConvWindow)
	}
	ms := ck.Header.Metrics
	if len(ms) < 2 || !(ms[len(ms)-1].ValBitsPerSite < ms[0].ValBitsPerSite) {
		t.Errorf("validation did not improve: %+v", ms)
	}
	for _, tc := range []struct {
		mod  func(*Settings)
		want string
	}{
		{func(s *Settings) { s.Arch.Order = "snake" }, "order"},
		{func(s *Settings) { s.Arch.Kind = "pixel" }, "arch"},
		{func(s *Settings) { s.Arch.Window = -1 }, "window"},
	} {
		s := st
		tc.mod(&s)
		if err := s.Validate(); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("settings %+v: error %v, want one about %s", s.Arch, err, tc.want)
		}
	}
}
