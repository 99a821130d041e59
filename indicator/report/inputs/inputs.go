// Package inputs reads the dataset and checkpoints a scan used and
// summarises them for the sections of report.html (package report renders
// only the values it is given and opens no input file).
package inputs

import (
	"fmt"
	"strings"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/indicator/report"
)

// ModelSummary describes a checkpoint, read from path, for report.html.
func ModelSummary(path string, ck *checkpoints.Checkpoint) report.ModelInfo {
	h := ck.Header
	c := h.Model
	freq := "frequencies"
	if c.Fourier == 1 {
		freq = "frequency"
	}
	arch := fmt.Sprintf("conditioned MADE: masked hidden layers %v, conditioning net %v, %d Fourier %s, %s activation", c.Hidden, c.CondHidden, c.Fourier, freq, c.Activation)
	if c.Direct {
		arch += ", direct connection"
	}
	if c.FiLM {
		arch += ", FiLM conditioning"
	}
	if c.Symmetric {
		arch += ", spin-flip symmetric"
	}
	if h.Training.OrderName != "" {
		arch += ", " + h.Training.OrderName + " order"
	}
	if len(h.Training.Augment) > 0 {
		arch += ", trained with snapshots augmented by " + strings.Join(h.Training.Augment, ", ")
	}
	if h.Training.AverageEpochs > 0 {
		arch += fmt.Sprintf(", weights averaged over %g epochs", h.Training.AverageEpochs)
	}
	m := report.ModelInfo{
		Path: path, Architecture: arch, Params: ck.NumParams(),
		Epochs: h.Optimizer.Epoch, BestEpoch: h.BestEpoch, Stopped: h.Stopped,
		BestVal: h.BestValBitsPerSite, BestValErr: h.BestValStdErrBitsPerSite, HeldOut: h.HeldOutBitsPerSite,
	}
	for _, e := range h.Metrics {
		m.Curve = append(m.Curve, report.EpochPoint{Epoch: e.Epoch, Train: e.TrainBitsPerSite, Val: e.ValBitsPerSite})
	}
	return m
}

// Page builds the dataset and model sections of a scan's report.html from
// the dataset at dataPath ("" for none) and the checkpoints at models; a
// file that fails to load becomes a line in Problems.
func Page(dataPath string, models []string) *report.Page {
	pg := &report.Page{}
	if dataPath != "" {
		if ds, err := data.ReadHead(dataPath, data.ReadOptions{}); err != nil {
			pg.Problems = append(pg.Problems, fmt.Sprintf("dataset summary not available: %v", err))
		} else {
			pg.Dataset = report.DatasetSummary(dataPath, ds)
		}
	}
	for _, p := range models {
		ck, err := checkpoints.Load(p)
		if err != nil {
			pg.Problems = append(pg.Problems, fmt.Sprintf("model summary not available: %v", err))
			continue
		}
		pg.Models = append(pg.Models, ModelSummary(p, ck))
	}
	return pg
}
