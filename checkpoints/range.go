package checkpoints

import "tidemark/data"

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
