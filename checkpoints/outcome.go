package checkpoints

import (
	"fmt"
	"io"
)

// WriteOutcome prints how the training run saved in c ended, as train
// reports it: why it stopped, the best epoch and its validation NLL (and
// the held-out points' NLL), the file it was saved to as path, and a note
// when the validation NLL was still improving at the last allowed epoch.
func (c *Checkpoint) WriteOutcome(w io.Writer, path string) {
	h := c.Header
	fmt.Fprintf(w, "stopped: %s after epoch %d; best epoch %d, validation %s bits/site", h.Stopped, h.Optimizer.Epoch, h.BestEpoch,
		WithError(h.BestValBitsPerSite, h.BestValStdErrBitsPerSite, 5))
	if h.HeldOutBitsPerSite != nil {
		fmt.Fprintf(w, ", held-out points %.5f bits/site", *h.HeldOutBitsPerSite)
	}
	fmt.Fprintf(w, "\nsaved %s (%d parameters)\n", path, c.NumParams())
	if h.Stopped == "max epochs" && h.BestEpoch == h.Optimizer.Epoch {
		fmt.Fprintf(w, "note: the validation NLL was still improving at the last epoch; more --epochs (with --resume %s) may fit better\n", path)
	}
}
