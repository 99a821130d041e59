package checkpoints

import (
	"encoding/json"

	"tidemark/model"
)

// Header is the JSON header of a checkpoint: everything about a trained
// model except its numbers.
type Header struct {
	// Software is the tidemark version that wrote the file.
	Software string `json:"software_version"`
	// Created is the RFC 3339 time the file was written.
	Created string `json:"created"`
	// Model is the architecture and the parameter normalisation
	// (Model.ParamLo, Model.ParamHi) and site ordering (Model.Order).
	Model model.Config `json:"model"`
	// ParamNames names the control parameters, in the order of λ.
	ParamNames []string `json:"param_names"`
	// Alphabet is q, the number of values a site takes.
	Alphabet int `json:"alphabet"`
	// Lattice is the dataset's lattice shape (row-major; product = sites).
	Lattice []int `json:"lattice"`
	// Dataset identifies the training data.
	Dataset DatasetInfo `json:"dataset"`
	// HeldOut lists the grid points kept out of training and validation.
	HeldOut [][]float64 `json:"held_out"`
	// HoldoutSpec is the --holdout text that selected them ("" for none).
	HoldoutSpec string `json:"holdout_spec"`
	// Training records the settings and seed of the run.
	Training Training `json:"training"`
	// Ensemble, for a member of an ensemble (train --ensemble), records
	// its place in it; nil for a single model and in older files.
	Ensemble *EnsembleMember `json:"ensemble,omitempty"`
	// Metrics holds one entry per completed epoch.
	Metrics []EpochMetrics `json:"metrics"`
	// BestEpoch is the epoch (1-based) whose weights are stored as "best";
	// 0 before the first epoch completes.
	BestEpoch int `json:"best_epoch"`
	// BestValBitsPerSite is the validation NLL of the best weights in bits
	// per site.
	BestValBitsPerSite float64 `json:"best_val_bits_per_site"`
	// BestValStdErrBitsPerSite is its standard error over the validation
	// snapshots (0: not recorded, as in older files).
	BestValStdErrBitsPerSite float64 `json:"best_val_stderr_bits_per_site,omitempty"`
	// HeldOutBitsPerSite is the NLL of the best weights on the held-out
	// points' samples in bits per site, when there are held-out points.
	HeldOutBitsPerSite *float64 `json:"heldout_bits_per_site,omitempty"`
	// Stopped says why training ended: "max epochs", "early stopping",
	// "interrupted", "stop-after limit" (a requested early stop) or "" while running.
	Stopped string `json:"stopped"`
	// Optimizer is the state needed to resume training.
	Optimizer OptimizerState `json:"optimizer"`
	// Sections lists the tensors of the payload, in order.
	Sections []Section `json:"sections"`
}

// DatasetInfo identifies the dataset a model was trained on.
type DatasetInfo struct {
	// Fingerprint is the hex SHA-256 of the states bytes followed by the
	// params as float64 little-endian (see Fingerprint).
	Fingerprint string `json:"fingerprint"`
	// Path is the file name given on the command line (informative only).
	Path string `json:"path,omitempty"`
	// Snapshots, Sites and Points are M, N and the number of grid points.
	Snapshots int `json:"snapshots"`
	Sites     int `json:"sites"`
	Points    int `json:"points"`
	// Source is the dataset's meta.source object.
	Source json.RawMessage `json:"source,omitempty"`
}

// Training records the settings of a training run. Learning rates are per
// Adam step; Clip is the maximum global L2 norm of the gradient of the mean
// negative log-likelihood per site (nats).
type Training struct {
	Epochs          int     `json:"epochs"`
	Batch           int     `json:"batch"`
	LR              float64 `json:"lr"`
	MinLR           float64 `json:"min_lr"`
	Seed            uint64  `json:"seed"`
	ValFrac         float64 `json:"val_frac"`
	Patience        int     `json:"patience"`
	Schedule        string  `json:"schedule"`
	PlateauPatience int     `json:"plateau_patience"`
	PlateauFactor   float64 `json:"plateau_factor"`
	WeightDecay     float64 `json:"weight_decay"`
	Clip            float64 `json:"clip"`
	Beta1           float64 `json:"beta1"`
	Beta2           float64 `json:"beta2"`
	Eps             float64 `json:"eps"`
	Threads         int     `json:"threads"`
	OrderName       string  `json:"order_name"`
	// Augment lists the symmetries the training snapshots were augmented
	// with (see train.ParseAugment); empty for none.
	Augment []string `json:"augment,omitempty"`
	// AverageEpochs is the time constant, in epochs, of the moving average
	// of the weights that was validated and kept (train.Settings.Average);
	// zero for none.
	AverageEpochs  float64 `json:"average_epochs,omitempty"`
	TrainSnapshots int     `json:"train_snapshots"`
	ValSnapshots   int     `json:"val_snapshots"`
	HeldSnapshots  int     `json:"heldout_snapshots"`
}

// EpochMetrics are the figures of one epoch. The training NLL is the
// average over the epoch's minibatches as the weights changed; the
// validation NLL is computed with the weights at the end of the epoch (their
// moving average, when the run averages them).
type EpochMetrics struct {
	Epoch            int     `json:"epoch"`
	TrainBitsPerSite float64 `json:"train_bits_per_site"`
	ValBitsPerSite   float64 `json:"val_bits_per_site"`
	// ValStdErrBitsPerSite is the standard error of ValBitsPerSite over
	// the validation snapshots (0: not recorded, as in older files).
	ValStdErrBitsPerSite float64 `json:"val_stderr_bits_per_site,omitempty"`
	SamplesPerS          float64 `json:"samples_per_s"`
	Seconds              float64 `json:"seconds"`
	LR                   float64 `json:"lr"`
}

// OptimizerState is what Adam and the schedule need to continue a run
// exactly. Every random stream of training is derived from (seed, epoch) or
// (seed, grid index), so the epoch number is the whole random state.
type OptimizerState struct {
	// Method is "adam" or "adamw" (decoupled weight decay).
	Method string `json:"method"`
	// Step is the number of Adam updates done (t in Kingma & Ba 2015).
	Step int `json:"step"`
	// LR is the current learning rate.
	LR float64 `json:"lr"`
	// LRScale, when not 0 or 1, is the factor the cosine schedule's rate is
	// multiplied by after recoveries from non-finite losses.
	LRScale float64 `json:"lr_scale,omitempty"`
	// Epoch is the number of completed epochs.
	Epoch int `json:"epoch"`
	// BestVal is the best validation NLL so far in nats per site.
	BestVal float64 `json:"best_val_nats_per_site"`
	// SinceBest counts epochs since the validation NLL last improved.
	SinceBest int `json:"since_best"`
	// SincePlateau counts epochs since the last improvement or rate cut.
	SincePlateau int `json:"since_plateau"`
	// RNG describes how the random streams are derived.
	RNG string `json:"rng"`
}

// Section is one list of tensors in the payload.
type Section struct {
	Name    string       `json:"name"`
	Tensors []TensorInfo `json:"tensors"`
}

// TensorInfo is the name and shape of one tensor in the payload.
type TensorInfo struct {
	Name  string `json:"name"`
	Shape []int  `json:"shape"`
}

// Section names in the payload.
const (
	SectionBest  = "best"
	SectionLast  = "last"
	SectionAdamM = "adam_m"
	SectionAdamV = "adam_v"
	// SectionAverage holds the moving average of the weights, when the run
	// averages them (optional; tidemark before it refuses the file with
	// "unknown payload section").
	SectionAverage = "average"
)
