package studyrun

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const smallStudy = `[system]
kind = "ising"
sizes = [4, 6, 8]
grid = "T=1.5:3.5:7"
samples = 40
seed = 7

[model]
ensemble = 2
epochs = 2
hidden = [16]

[scan]
bootstrap = 10
indicators = ["fisher", "local"]

[extrapolate]
nu = 1.0
bootstrap = 20
`

func writeStudy(t *testing.T, text string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "study.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestLoadErrors checks that every bad study file gets one line naming the
// file, the line and the key.
func TestLoadErrors(t *testing.T) {
	for _, tc := range []struct {
		name, text string
		want       []string
	}{
		{"unknown key", strings.Replace(smallStudy, "epochs = 2", "epochs = 2\nlearning_rate = 0.1", 1),
			[]string{":11:", "unknown key model.learning_rate"}},
		{"unknown section", smallStudy + "\n[plots]\nwidth = 3\n", []string{":21:", "unknown key plots"}},
		{"wrong type", strings.Replace(smallStudy, "samples = 40", `samples = "forty"`, 1),
			[]string{":5:", "key system.samples", "expected an integer", "found a string"}},
		{"wrong array element", strings.Replace(smallStudy, "sizes = [4, 6, 8]", `sizes = [4, "six"]`, 1),
			[]string{":3:", "system.sizes"}},
		{"missing section", strings.Replace(smallStudy, "[model]\nensemble = 2\nepochs = 2\nhidden = [16]\n", "", 1), []string{"missing section [model]"}},
		{"syntax", strings.Replace(smallStudy, "seed = 7", "seed = ", 1), []string{":6:", "key system.seed"}},
		{"bad kind", strings.Replace(smallStudy, `kind = "ising"`, `kind = "potts"`, 1),
			[]string{":2:", "key system.kind", `found "potts"`}},
		{"bad grid", strings.Replace(smallStudy, `grid = "T=1.5:3.5:7"`, `grid = "Q=1:2:3"`, 1),
			[]string{":4:", "system.grid", "unknown axis"}},
		{"too few sizes to extrapolate", strings.Replace(strings.Replace(smallStudy, "sizes = [4, 6, 8]", "sizes = [4, 6]", 1), "nu = 1.0", "nu = 1.0\nenabled = true", 1),
			[]string{":19:", "extrapolate.enabled", "at least 3 sizes"}},
		{"bad hidden width", strings.Replace(smallStudy, "hidden = [16]", "hidden = [16, 0]", 1),
			[]string{":11:", "model.hidden", "at least 1 unit"}},
		{"missing import", "[system]\nkind = \"import\"\nsizes = [4, 6, 8]\ndatasets = [\"a.npz\", \"b.npz\", \"c.npz\"]\n[model]\n[scan]\n",
			[]string{":4:", "system.datasets", "a.npz: no such file"}},
		{"bad block", strings.Replace(smallStudy, "bootstrap = 10", "bootstrap = 10\nblock = -5", 1),
			[]string{":15:", "scan.block", "found -5"}},
		{"bad ensemble", strings.Replace(smallStudy, "ensemble = 2", "ensemble = -1", 1),
			[]string{":9:", "model.ensemble"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := writeStudy(t, tc.text)
			_, err := Load(path)
			if err == nil {
				t.Fatal("Load accepted the file")
			}
			if !errors.Is(err, ErrStudyFile) {
				t.Errorf("error %v does not wrap ErrStudyFile", err)
			}
			msg := err.Error()
			if strings.Contains(msg, "\n") {
				t.Errorf("error is not one line: %q", msg)
			}
			for _, w := range append(tc.want, path) {
				if !strings.Contains(msg, w) {
					t.Errorf("error %q does not name %q", msg, w)
				}
			}
		})
	}
}

// TestLoadDefaults checks the defaults a minimal file gets.
func TestLoadDefaults(t *testing.T) {
	st, err := Load(writeStudy(t, "[system]\nkind = \"ising\"\nsizes = [4]\ngrid = \"T=2:3:3\"\nsamples = 10\n[model]\n[scan]\n"))
	if err != nil {
		t.Fatal(err)
	}
	if st.Model.Ensemble != 1 || st.Model.Threads != 1 || *st.Scan.Bootstrap != defaultScanBootstrap || *st.Extrapolate.Enabled {
		t.Errorf("defaults: ensemble %d, threads %d, bootstrap %d, extrapolate %v", st.Model.Ensemble, st.Model.Threads, *st.Scan.Bootstrap, *st.Extrapolate.Enabled)
	}
}
