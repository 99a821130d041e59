// Package scorestat scores snapshots with a density source and summarises
// the scores: log p(x|λ) of every snapshot at its own λ (or at one given λ),
// per-point means with their standard errors, outlier flags against the
// range of the source's own samples, and posteriors over a grid of
// parameter points ("which λ did these snapshots come from?", with
// indicator/posterior). It also renders these summaries as text, CSV and
// NumPy .npz arrays; the command layer only chooses where they go.
package scorestat
