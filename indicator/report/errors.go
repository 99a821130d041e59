package report

import "fmt"

// Errors states which errors a scan's error bars include (summary.json
// "errors"; printed by scan).
type Errors struct {
	// Bootstrap is the number of bootstrap resamples of the snapshots
	// behind the errors (0: none).
	Bootstrap int `json:"bootstrap"`
	// EnsembleMembers is the number of trained models (members of an
	// ensemble or several --model files) whose spread joins the errors in
	// quadrature; 0 for a source that is not a trained model.
	EnsembleMembers int `json:"ensemble_members"`
	// ModelError reports whether the error bars include an estimate of
	// the model's own error (the spread of two or more models).
	ModelError bool `json:"includes_model_error"`
	// UnseenShift reports that every peak's error includes its shift between
	// the curves on all snapshots and on those the model did not train on,
	// beyond sampling noise (a measure of how much the model learnt its
	// training snapshots themselves).
	UnseenShift bool `json:"includes_unseen_shift"`
	// Statement says the same in a sentence.
	Statement string `json:"statement"`
}

// SingleModelWarning is the part of a one-model scan's statement that the
// report shows beside its peak table.
const SingleModelWarning = "these error bars exclude the model's own error: a misfit of the one model shifts peaks by more than they show (train --ensemble K trains members whose spread adds it)"

// UnseenStatement is the part of a statement for scans whose peaks were
// compared on the snapshots the model did not train on.
const UnseenStatement = "each peak's shift between all snapshots and those the model did not train on (its validation split), beyond sampling noise, joins its error"

// UnseenBiasWarning is what a one-model scan's errors still leave out
// when its peaks were compared on unseen snapshots.
const UnseenBiasWarning = "a misfit the model shows on seen and unseen snapshots alike (a bias) is not included (train --ensemble K adds the spread of members)"

// CalibrationNote is what the error bars of one model measured against
// exact peaks (bench/RESULTS.md, "Calibration with the direct-connection
// window"): the part of a model scan's statement that says which
// indicators' bars were too small.
const CalibrationNote = "measured over 10 independent 16×16 Ising datasets, one model's 2σ covered the exact density's peak in 90–100% of them for lbc, sl, pbm, fisher and fisher_deriv but in 70% for local, so read local's errors as too small"

// ErrorStatement describes the errors of a scan with a source of the
// given kind ("model", "exact" or "histogram"), bootstrap resamples and
// sources combined; exactSums means the expectations are exact sums.
func ErrorStatement(kind string, bootstrap, sources int, exactSums, unseen bool) Errors {
	e := errorStatement(kind, bootstrap, sources, exactSums)
	if unseen && kind == "model" {
		e.UnseenShift, e.ModelError = true, true
		if sources > 1 {
			e.Statement += "; " + UnseenStatement
		} else {
			e.Statement = fmt.Sprintf("the bootstrap over the snapshots (%d resamples), and %s; %s; %s", bootstrap, UnseenStatement, UnseenBiasWarning, CalibrationNote)
		}
	}
	return e
}

func errorStatement(kind string, bootstrap, sources int, exactSums bool) Errors {
	e := Errors{Bootstrap: bootstrap}
	boot := fmt.Sprintf("the bootstrap over the snapshots (%d resamples)", bootstrap)
	switch {
	case exactSums:
		boot = "no sampling error (exact sums over all states)"
	case bootstrap == 0:
		boot = "no bootstrap (--bootstrap 0)"
	}
	switch {
	case kind == "model" && sources > 1:
		e.EnsembleMembers, e.ModelError = sources, true
		e.Statement = fmt.Sprintf("%s and the spread of %d models (ensemble members or --model files), in quadrature; the spread estimates the model's own error as far as it varies between members, not a bias they share", boot, sources)
	case kind == "model":
		e.EnsembleMembers = 1
		e.Statement = boot + " only; " + SingleModelWarning + "; " + CalibrationNote
	case kind == "exact":
		e.Statement = boot + "; the exact density has no model error"
	default:
		e.Statement = boot + "; the histogram is re-estimated in every resample"
	}
	return e
}
