package report

import (
	"strings"
	"testing"
)

// TestErrorStatement checks what a scan says its error bars include, for
// every kind of source.
func TestErrorStatement(t *testing.T) {
	for _, tc := range []struct {
		kind       string
		boot, srcs int
		exactSums  bool
		unseen     bool
		members    int
		modelError bool
		says       []string
	}{
		{"model", 100, 1, false, false, 1, false, []string{"(100 resamples) only", "exclude the model's own error", "--ensemble", "70% for local"}},
		{"model", 100, 1, false, true, 1, true, []string{"(100 resamples)", "did not train on", "a bias", "--ensemble", "70% for local"}},
		{"model", 100, 4, false, false, 4, true, []string{"spread of 4 models", "in quadrature"}},
		{"model", 100, 4, false, true, 4, true, []string{"spread of 4 models", "did not train on"}},
		{"model", 0, 3, false, false, 3, true, []string{"no bootstrap", "spread of 3 models"}},
		{"exact", 50, 1, false, false, 0, false, []string{"(50 resamples)", "no model error"}},
		{"exact", 0, 1, true, false, 0, false, []string{"exact sums"}},
		{"histogram", 20, 1, false, false, 0, false, []string{"(20 resamples)", "histogram"}},
	} {
		e := ErrorStatement(tc.kind, tc.boot, tc.srcs, tc.exactSums, tc.unseen)
		if e.EnsembleMembers != tc.members || e.ModelError != tc.modelError || e.Bootstrap != tc.boot || e.UnseenShift != (tc.unseen && tc.kind == "model") {
			t.Errorf("%s, %d resamples, %d sources: %+v", tc.kind, tc.boot, tc.srcs, e)
		}
		for _, s := range tc.says {
			if !strings.Contains(e.Statement, s) {
				t.Errorf("%s, %d sources: %q lacks %q", tc.kind, tc.srcs, e.Statement, s)
			}
		}
	}
}
