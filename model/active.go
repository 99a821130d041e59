package model

// minRun is the number of skipped entries one run must save, on average,
// for ActiveRuns to list a weight's runs: below it the bookkeeping would
// cost more than the skipped entries.
const minRun = 16

// ActiveRuns returns, for each tensor of m.Weights, the runs [lo, hi) of
// its entries inside the weight's mask, in increasing order, or nil when
// every entry counts: an unmasked weight, a mask with no entry outside it,
// or one whose gaps between runs are shorter than minRun on average (an
// autoregressive order far from the sites' order scatters them). A direct
// connection limited to a window of the lattice has short runs (one per
// lattice row in the window) but long gaps, and is listed. The entries outside a
// mask are zero and their gradient is always zero, so an optimiser that
// skips them gives the same weights; with hidden units sorted by degree
// (see tiling) each row of a MADE mask is one run, and about half of the
// masked entries lie outside.
func (m *Model) ActiveRuns() [][][2]int {
	out := make([][][2]int, len(m.Weights))
	for w := range m.Weights {
		mask := m.maskOf(w)
		if mask == nil {
			continue
		}
		var runs [][2]int
		inside := 0
		for j := 0; j < len(mask); {
			if mask[j] == 0 {
				j++
				continue
			}
			lo := j
			for j < len(mask) && mask[j] != 0 {
				j++
			}
			runs = append(runs, [2]int{lo, j})
			inside += j - lo
		}
		if inside == len(mask) || (len(runs) > 0 && len(mask)-inside < minRun*len(runs)) {
			continue
		}
		if runs == nil {
			runs = [][2]int{}
		}
		out[w] = runs
	}
	return out
}
