package chain

import (
	"math"
	"sort"
)

// collapseShared writes log p of every random-basis snapshot row of xs
// (values 2·basis + outcome, n sites per row) into dst, without the (1/3)^N
// basis factor, by the same chain rule as collapse but sharing the work of
// common prefixes: the rows are visited in the order in which collapse
// measures their sites (site N−1 first), and a row starts from the
// collapsed state of the longest prefix it shares with the previous row.
// Collapsing the first site costs 2^N, the d-th 2^(N−d+1), so measuring
// the first few sites — nearly all of the cost — is done once per distinct
// prefix rather than once per row. The arithmetic per row is that of
// collapse, so the results are identical to it.
func collapseShared(amp []complex128, xs []uint8, n int, dst []float64) {
	M := len(dst)
	if M == 0 {
		return
	}
	order := make([]int, M)
	for i := range order {
		order[i] = i
	}
	row := func(m int) []uint8 { return xs[m*n : (m+1)*n] }
	sort.Slice(order, func(a, b int) bool {
		ra, rb := row(order[a]), row(order[b])
		for s := n - 1; s >= 0; s-- {
			if ra[s] != rb[s] {
				return ra[s] < rb[s]
			}
		}
		return order[a] < order[b]
	})
	tot := 0.0
	for _, a := range amp {
		tot += real(a)*real(a) + imag(a)*imag(a)
	}
	// level[d] is the state after d sites were measured (2^(n−d) amplitudes),
	// with its squared norm norms[d] and log probability so far logps[d].
	level := make([][]complex128, n+1)
	level[0] = amp
	for d := 1; d <= n; d++ {
		level[d] = make([]complex128, 1<<(n-d))
	}
	norms := make([]float64, n+1)
	logps := make([]float64, n+1)
	norms[0] = tot
	var prev []uint8
	for _, m := range order {
		r := row(m)
		// depth of the prefix shared with the previous row
		c := 0
		if prev != nil {
			for c < n && r[n-1-c] == prev[n-1-c] {
				c++
			}
		}
		if prev != nil && math.IsInf(logps[c], -1) {
			dst[m] = math.Inf(-1)
			prev = r
			continue
		}
		res := logps[c]
		for d := c + 1; d <= n; d++ {
			site := n - d
			v := r[site]
			u := measureRow[int(v)/2][1-int(v)%2]
			cur, next := level[d-1], level[d]
			half := 1 << site
			pc := 0.0
			for i := 0; i < half; i++ {
				a := u[0]*cur[i] + u[1]*cur[i+half]
				next[i] = a
				pc += real(a)*real(a) + imag(a)*imag(a)
			}
			if pc <= 0 || norms[d-1] <= 0 {
				for e := d; e <= n; e++ {
					logps[e] = math.Inf(-1)
				}
				res = math.Inf(-1)
				break
			}
			res += math.Log(pc / norms[d-1])
			norms[d] = pc
			logps[d] = res
		}
		dst[m] = res
		prev = r
	}
}
