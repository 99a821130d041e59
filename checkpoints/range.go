package checkpoints

import (
	"fmt"

	"tidemark/data"
)

// Outside returns the index of the first parameter of p that lies outside
// the range [Model.ParamLo, Model.ParamHi] the model was trained on, or −1
// when p lies inside it: scores there are extrapolations.
func (c *Checkpoint) Outside(p []float64) int {
	lo, hi := c.Header.Model.ParamLo, c.Header.Model.ParamHi
	for i, v := range p {
		if i < len(lo) && (v < lo[i] || v > hi[i]) {
			return i
		}
	}
	return -1
}

// CheckDatasetAs is CheckDataset for a dataset that may be unlabelled: one
// without parameters is checked in everything but the parameter names.
func (c *Checkpoint) CheckDatasetAs(ds *data.Dataset) error {
	if ds.D == 0 {
		cp := *ds
		cp.Meta.ParamNames = c.Header.ParamNames
		ds = &cp
	}
	return c.CheckDataset(ds)
}

// ExtrapolationNote returns a warning when one of pts lies outside the range
// the model was trained on (see Outside), naming the first such parameter
// and what set it, or "" when every point lies inside.
func (c *Checkpoint) ExtrapolationNote(what string, pts ...[]float64) string {
	for _, p := range pts {
		if i := c.Outside(p); i >= 0 {
			lo, hi := c.Header.Model.ParamLo, c.Header.Model.ParamHi
			return fmt.Sprintf("warning: %s reaches %s=%g, outside the range [%g, %g] the model was trained on; the scores there are extrapolations",
				what, c.Header.ParamNames[i], p[i], lo[i], hi[i])
		}
	}
	return ""
}
