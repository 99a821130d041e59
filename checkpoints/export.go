package checkpoints

import (
	"encoding/json"
	"fmt"

	"tidemark/data"
	"tidemark/model"
)

// ExportConfig is the JSON object stored in the "config" array of an
// exported weights archive.
type ExportConfig struct {
	Model      model.Config `json:"model"`
	ParamNames []string     `json:"param_names"`
	Lattice    []int        `json:"lattice"`
	Alphabet   int          `json:"alphabet"`
	Weights    []string     `json:"weights"`
	Masks      []string     `json:"masks"`
	Which      string       `json:"which"`
	Epoch      int          `json:"epoch"`
	Software   string       `json:"software_version"`
	Checkpoint string       `json:"checkpoint"`
}

// Export is a checkpoint's weights prepared for NumPy.
type Export struct {
	Config ExportConfig
	// Arrays holds every weight tensor as a float64 array of its own
	// shape, every 0/1 connectivity mask, and "config", the UTF-8 JSON of
	// Config.
	Arrays []data.Array
}

// Export returns the best weights (or the last epoch's, with last) with
// their masks and configuration as .npz arrays; path and software are
// recorded in the configuration.
func (c *Checkpoint) Export(last bool, path, software string) (*Export, error) {
	m, err := c.Model()
	which, epoch := "best", c.Header.BestEpoch
	if last {
		m, err = c.LastModel()
		which, epoch = "last", c.Header.Optimizer.Epoch
	}
	if err != nil {
		return nil, err
	}
	cfg := ExportConfig{
		Model: m.Cfg, ParamNames: c.Header.ParamNames, Lattice: c.Header.Lattice, Alphabet: c.Header.Alphabet,
		Which: which, Epoch: epoch, Software: software, Checkpoint: path,
		Weights: []string{}, Masks: []string{},
	}
	masks := m.Masks()
	var arrays []data.Array
	for _, t := range m.Weights {
		cfg.Weights = append(cfg.Weights, t.Name)
		arrays = append(arrays, data.Float64Array(t.Name, t.Data, t.Shape...))
	}
	for _, t := range masks {
		cfg.Masks = append(cfg.Masks, t.Name)
		arrays = append(arrays, data.Float64Array(t.Name, t.Data, t.Shape...))
	}
	js, err := json.Marshal(cfg)
	if err != nil {
		return nil, fmt.Errorf("encoding the config: %w", err)
	}
	return &Export{Config: cfg, Arrays: append(arrays, data.Uint8Array("config", js, len(js)))}, nil
}
