package ising

// PointInfo records how the samples of one grid point were made.
type PointInfo struct {
	// Params are the grid point's values, in the order of the grid axes.
	Params []float64 `json:"params"`
	// Method is "wolff", "metropolis" or "exact".
	Method string `json:"method"`
	// TauEnergy and TauAbsM are the integrated autocorrelation times of the
	// energy and of |m|, in sweeps, measured during burn-in (0 for exact).
	TauEnergy float64 `json:"tau_energy"`
	TauAbsM   float64 `json:"tau_absm"`
	// ClustersPerSweep is the number of Wolff clusters in one sweep (0 for
	// Metropolis and exact sampling).
	ClustersPerSweep int `json:"clusters_per_sweep,omitempty"`
	// TauConverged is false when the burn-in series was cut before it
	// spanned TauRuns autocorrelation times: the τ (and the spacing) may
	// then be underestimated.
	TauConverged bool `json:"tau_converged"`
	// SpacingSweeps is the number of sweeps between kept samples.
	SpacingSweeps int `json:"spacing_sweeps"`
	// BurnIn is the number of sweeps before the first kept sample.
	BurnIn int `json:"burn_in"`
}
