package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tidemark/checkpoints"
)

// TestEnsembleTrainScanInspect trains an ensemble of 3 and checks that one
// name stands for all of it: its files, what inspect lists, that scan
// --model m.ckpt combines 3 models and says its errors include their
// spread, that --member 2 alone gives member 2's weights bit for bit, and
// that a missing member is a one-line error.
func TestEnsembleTrainScanInspect(t *testing.T) {
	ensureIsingExact()
	dir := t.TempDir()
	ds := ckptTestData(t, dir, "d.npz", 1)
	m := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append(append([]string{"train", ds, "-o", m}, tinyTrain...), "--ensemble", "3", "--bag", "--threads", "2")...); err != nil {
		t.Fatal(err)
	}
	for k := 1; k <= 3; k++ {
		if _, err := os.Stat(checkpoints.MemberPath(m, k)); err != nil {
			t.Fatalf("member %d: %v", k, err)
		}
	}
	out, err := execTidemark(t, "inspect", m)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out, "member 1 of 3") || !strings.Contains(out, "m.e3.ckpt") {
		t.Errorf("inspect does not list the ensemble:\n%s", out)
	}
	scan := filepath.Join(dir, "scan")
	out, err = execTidemark(t, "scan", "--model", m, "--data", ds, "--indicators", "lbc", "--bootstrap", "10", "-o", scan, "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out, "errors: the bootstrap over the snapshots (10 resamples) and the spread of 3 models") {
		t.Errorf("scan does not state the ensemble's errors:\n%s", out)
	}
	var sum struct {
		Sources int `json:"sources"`
		Errors  struct {
			Bootstrap       int  `json:"bootstrap"`
			EnsembleMembers int  `json:"ensemble_members"`
			ModelError      bool `json:"includes_model_error"`
		} `json:"errors"`
	}
	b, err := os.ReadFile(filepath.Join(scan, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if sum.Sources != 3 || sum.Errors.EnsembleMembers != 3 || !sum.Errors.ModelError || sum.Errors.Bootstrap != 10 {
		t.Errorf("summary.json: sources %d, errors %+v; expected 3 sources, 3 members, model error, 10 resamples", sum.Sources, sum.Errors)
	}

	alone := filepath.Join(dir, "alone.ckpt")
	if _, err := execTidemark(t, append(append([]string{"train", ds, "-o", alone}, tinyTrain...), "--ensemble", "3", "--bag", "--member", "2", "--threads", "2")...); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(alone); err == nil {
		t.Error("--member 2 wrote member 1's file too")
	}
	a, err1 := checkpoints.Load(checkpoints.MemberPath(alone, 2))
	e, err2 := checkpoints.Load(checkpoints.MemberPath(m, 2))
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	for i := range a.Best {
		if !slices.Equal(a.Best[i].Data, e.Best[i].Data) {
			t.Fatalf("member 2 trained alone differs from the ensemble's in %s", a.Best[i].Name)
		}
	}

	if err := os.Remove(checkpoints.MemberPath(m, 3)); err != nil {
		t.Fatal(err)
	}
	_, err = execTidemark(t, "scan", "--model", m, "--data", ds, "--indicators", "lbc", "-o", filepath.Join(dir, "scan2"), "--quiet")
	if err == nil || !strings.Contains(err.Error(), "member 3 is missing") {
		t.Errorf("scan with a missing member: error %v", err)
	}
}

// TestSingleModelScanSaysErrorsExcludeModel checks what a scan with one
// model says its error bars include, in its printed summary, summary.json
// and report.html: on the data it was trained on, the shift of the peaks on
// the snapshots it did not train on, but not a bias; on other data, that
// they exclude the model's own error.
func TestSingleModelScanSaysErrorsExcludeModel(t *testing.T) {
	ensureIsingExact()
	dir := t.TempDir()
	ds := ckptTestData(t, dir, "d.npz", 1)
	other := ckptTestData(t, dir, "other.npz", 2)
	m := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append([]string{"train", ds, "-o", m}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		data string
		want []string
	}{
		{ds, []string{"did not train on", "a misfit the model shows on seen and unseen snapshots alike (a bias) is not included"}},
		{other, []string{"exclude the model's own error"}},
	} {
		scan := filepath.Join(dir, "scan-"+filepath.Base(tc.data))
		out, err := execTidemark(t, "scan", "--model", m, "--data", tc.data, "--indicators", "lbc,fisher", "--bootstrap", "10", "--model-samples", "100", "-o", scan, "--quiet")
		if err != nil {
			t.Fatal(err)
		}
		if strings.Contains(out, "fisher_deriv is computed from snapshots the model draws itself") {
			t.Errorf("on the data's own grid fisher_deriv reads the data, but the scan says it escapes the unseen check:\n%s", out)
		}
		if tc.data == ds {
			checkDerivUnseen(t, filepath.Join(scan, "summary.json"))
		}
		for name, text := range map[string]string{"output": out, "summary.json": read(t, filepath.Join(scan, "summary.json")), "report.html": read(t, filepath.Join(scan, "report.html"))} {
			for _, w := range tc.want {
				if !strings.Contains(strings.ReplaceAll(text, "&#39;", "'"), w) {
					t.Errorf("%s, %s lacks %q", filepath.Base(tc.data), name, w)
				}
			}
		}
	}
}

// TestEnsembleFlagErrors checks the one-line errors of bad ensemble flags.
func TestEnsembleFlagErrors(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"--ensemble", "0"}, "--ensemble: expected a number of members ≥ 1, found 0"},
		{[]string{"--ensemble", "3", "--member", "4"}, "--member: expected a member 1 to --ensemble (3, at least 2), found 4"},
		{[]string{"--ensemble", "1", "--member", "1"}, "--member: expected a member 1 to --ensemble (1, at least 2), found 1"},
	} {
		_, err := execTidemark(t, append([]string{"train", "x.npz", "-o", "x.ckpt"}, tc.args...)...)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%v: error %v, expected %q", tc.args, err, tc.want)
		}
	}
}

func read(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestEnsembleSeedOnlyByDefault checks that without --bag the members train
// on all the training snapshots (they differ by seed only, the configuration
// that measured closer to exact; bench/RESULTS.md) and record it.
func TestEnsembleSeedOnlyByDefault(t *testing.T) {
	ensureIsingExact()
	dir := t.TempDir()
	ds := ckptTestData(t, dir, "d.npz", 1)
	m := filepath.Join(dir, "m.ckpt")
	if _, err := execTidemark(t, append(append([]string{"train", ds, "-o", m}, tinyTrain...), "--ensemble", "2")...); err != nil {
		t.Fatal(err)
	}
	single := filepath.Join(dir, "s.ckpt")
	if _, err := execTidemark(t, append([]string{"train", ds, "-o", single}, tinyTrain...)...); err != nil {
		t.Fatal(err)
	}
	a, err1 := checkpoints.Load(checkpoints.MemberPath(m, 2))
	s, err2 := checkpoints.Load(single)
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	if e := a.Header.Ensemble; e == nil || !e.NoResample || a.Header.Training.TrainSnapshots != s.Header.Training.TrainSnapshots {
		t.Errorf("member 2: ensemble record %+v, %d training snapshots against the single model's %d", e, a.Header.Training.TrainSnapshots, s.Header.Training.TrainSnapshots)
	}
}

// checkDerivUnseen checks that a scan of a model's own data compared
// fisher_deriv's peaks on the unseen snapshots, as every other curve's: on
// the data's grid fisher_deriv averages over the data's snapshots.
func checkDerivUnseen(t *testing.T, summary string) {
	t.Helper()
	var s struct {
		Indicators map[string]struct {
			Peaks []struct {
				Unseen *struct{} `json:"unseen"`
			} `json:"peaks"`
		} `json:"indicators"`
	}
	if err := json.Unmarshal([]byte(read(t, summary)), &s); err != nil {
		t.Fatal(err)
	}
	fd, ok := s.Indicators["fisher_deriv"]
	if !ok {
		t.Fatal("summary.json has no fisher_deriv")
	}
	if len(fd.Peaks) == 0 {
		t.Fatal("fisher_deriv has no peak to compare")
	}
	for i, p := range fd.Peaks {
		if p.Unseen == nil {
			t.Errorf("fisher_deriv peak %d was not compared on the unseen snapshots", i+1)
		}
	}
}
