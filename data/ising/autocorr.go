package ising

import "math"

// SokalWindow is the window constant c of the automatic windowing
// procedure: the sum is cut at the first M with M ≥ c·τ(M) (A. D. Sokal,
// "Monte Carlo methods in statistical mechanics: foundations and new
// algorithms", lectures at the Cargèse summer school, 1996; c ≈ 4–6 is his
// advice for roughly exponential decay).
const SokalWindow = 6.0

// IntegratedTime returns the integrated autocorrelation time
// τ_int = ½ + Σ_{t=1}^{M} ρ(t) of the series x, in units of its spacing,
// with Sokal's automatic window M (the first M ≥ SokalWindow·τ_int(M)), and
// the window M itself. A series of constant values has τ_int = ½. ok is
// false when the series was too short for the window (M reached len(x)/2).
// The error of the mean of n correlated values is then
// sqrt(2 τ_int · Var(x) / n).
func IntegratedTime(x []float64) (tau float64, window int, ok bool) {
	n := len(x)
	if n < 4 {
		return 0.5, 0, false
	}
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	c0 := 0.0
	for _, v := range x {
		c0 += (v - mean) * (v - mean)
	}
	c0 /= float64(n)
	if c0 <= 1e-300 || c0 <= 1e-24*mean*mean {
		return 0.5, 0, true
	}
	tau = 0.5
	for t := 1; t < n/2; t++ {
		ct := 0.0
		for i := 0; i+t < n; i++ {
			ct += (x[i] - mean) * (x[i+t] - mean)
		}
		ct /= float64(n - t)
		tau += ct / c0
		if float64(t) >= SokalWindow*tau {
			return math.Max(tau, 0.5), t, true
		}
	}
	return math.Max(tau, 0.5), n / 2, false
}
