package model

import (
	"math"

	"gonum.org/v1/gonum/floats"
)

// rowGroups partitions the rows of a training batch into groups of equal
// conditioning features. Snapshots come from a grid of control parameters,
// so a minibatch of 128 rows drawn from a grid of 20 points holds at most
// 20 distinct λ: the conditioning heads u·V and u·S (dense products with
// one row per snapshot) then need computing once per group, not per row.
type rowGroups struct {
	rows  int   // rows partitioned (the graph's batch size)
	first []int // first row of each group
	of    []int // the group of each row
	// on says grouping pays: at most half as many groups as rows.
	on bool
}

// set partitions the rows of phi (rows × fd features) by exact equality.
// A batch whose rows are mostly distinct (continuous λ) is left
// ungrouped after at most rows/2 + 1 groups have been seen.
func (g *rowGroups) set(phi []float64, rows, fd int) {
	g.rows, g.first, g.on = rows, g.first[:0], false
	if cap(g.of) < rows {
		g.of = make([]int, rows)
	}
	g.of = g.of[:rows]
	limit := rows / 2
	for r := 0; r < rows; r++ {
		row := phi[r*fd : (r+1)*fd]
		k := -1
		// Rows of one grid point often come in runs; try the last
		// row's group first.
		if r > 0 && sameRow(row, phi[g.first[g.of[r-1]]*fd:]) {
			k = g.of[r-1]
		} else {
			for j, f := range g.first {
				if sameRow(row, phi[f*fd:]) {
					k = j
					break
				}
			}
		}
		if k < 0 {
			if len(g.first) == limit {
				return
			}
			k = len(g.first)
			g.first = append(g.first, r)
		}
		g.of[r] = k
	}
	g.on = len(g.first) > 0
}

// sameRow says a and the first len(a) entries of b are bit for bit equal.
func sameRow(a, b []float64) bool {
	for i, v := range a {
		if math.Float64bits(v) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// grouped says the operation of ml on rows rows takes the grouped path.
func (ml *maskedLinear) grouped(rows int) bool {
	return ml.grp != nil && ml.grp.on && ml.grp.rows == rows
}

// forwardGrouped computes y = x·(W⊙M) for rows rows whose x rows are equal
// within each group of ml.grp: one product row per group, copied to every
// row of the group.
func (ml *maskedLinear) forwardGrouped(y, x []float64, rows int) {
	g := ml.grp
	in, out, u := ml.t.in, ml.t.out, len(g.first)
	ml.xu = grow64(ml.xu, u*in)
	for k, r := range g.first {
		copy(ml.xu[k*in:(k+1)*in], x[r*in:(r+1)*in])
	}
	ml.yu = grow64(ml.yu, u*out)
	ml.forward(ml.yu, ml.xu, u, false)
	ml.dyuOK = false
	for r := 0; r < rows; r++ {
		k := g.of[r]
		copy(y[r*out:(r+1)*out], ml.yu[k*out:(k+1)*out])
	}
}

// groupDY returns the output gradient summed over the rows of each group,
// computed once per step for both gradients.
func (ml *maskedLinear) groupDY(dy []float64) []float64 {
	if ml.dyuOK {
		return ml.dyu
	}
	g := ml.grp
	out, u := ml.t.out, len(g.first)
	ml.dyu = grow64(ml.dyu, u*out)
	clear(ml.dyu)
	for r := 0; r < g.rows; r++ {
		k := g.of[r]
		floats.Add(ml.dyu[k*out:(k+1)*out], dy[r*out:(r+1)*out])
	}
	ml.dyuOK = true
	return ml.dyu
}

// gradXGrouped computes the input gradient of a grouped product: the
// group's summed gradient dY_g·(W⊙M)ᵀ on the group's first row and zero on
// the others. That is not dX row by row, but every weight upstream sees the
// same total: the layers that compute x (the conditioning net) act row by
// row on rows equal within a group, so their gradients are sums over rows
// that only the group totals enter (and the features φ themselves take no
// gradient).
func (ml *maskedLinear) gradXGrouped(dx, dy []float64, rows int) {
	g := ml.grp
	in, u := ml.t.in, len(g.first)
	dyu := ml.groupDY(dy)
	ml.dxu = grow64(ml.dxu, u*in)
	ml.gradX(ml.dxu, dyu, u)
	clear(dx[:rows*in])
	for k, r := range g.first {
		copy(dx[r*in:(r+1)*in], ml.dxu[k*in:(k+1)*in])
	}
}

// gradWGrouped computes dW = Σ_g x_gᵀ·dY_g over the groups.
func (ml *maskedLinear) gradWGrouped(dw, dy []float64) {
	ml.gradW(dw, ml.xu, ml.groupDY(dy), len(ml.grp.first))
}
