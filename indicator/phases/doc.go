// Package phases turns 2-D indicator maps into a phase diagram: a
// boundary-strength map per indicator (the largest eigenvalue of the Fisher
// metric, or the strongest per-axis neighbour contrast), a segmentation of
// the grid into regions separated by its ridges (the phases: their count and
// a label per grid point), the boundaries between regions as polylines with
// errors from bootstrap replicas and an ensemble of sources, and reference
// lines (exact boundaries, or curves read from a CSV file) to draw beside
// them.
//
// The package takes plain arrays — the grid's axis values and per-point or
// per-edge values with their replicas — and knows nothing of densities or
// samples, so it can be tested on maps whose ridges are known exactly.
//
// # Grid convention
//
// A grid has axes X0 (n0 values) and X1 (n1 values), both ascending; point
// k = i·n1 + j has coordinates (X0[i], X1[j]) — the last axis varies
// fastest, as in indicator.Layout. An edge along axis 0 joins (i,j) and
// (i+1,j) and has index i·n1 + j; an edge along axis 1 joins (i,j) and
// (i,j+1) and has index i·(n1−1) + j.
package phases
