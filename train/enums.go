package train

import "tidemark/data/textenum"

// Order is the autoregressive order of the sites a new model uses.
type Order string

// The orders.
const (
	// OrderRowMajor takes the sites in row-major (NumPy) order.
	OrderRowMajor Order = "rowmajor"
	// OrderSnake takes the rows of a 2-D lattice alternately left to right
	// and right to left (boustrophedon).
	OrderSnake Order = "snake"
)

// Orders lists the orders.
var Orders = []Order{OrderRowMajor, OrderSnake}

// String returns the order's name.
func (o Order) String() string { return string(o) }

// MarshalText returns the order's name.
func (o Order) MarshalText() ([]byte, error) { return []byte(o), nil }

// UnmarshalText reads an order's name.
func (o *Order) UnmarshalText(b []byte) error { return textenum.Parse(o, b, Orders, "order") }

// ArchKind is the network a new run builds.
type ArchKind string

// The networks.
const (
	// ArchDense is the masked MADE over all sites (any data).
	ArchDense ArchKind = "dense"
	// ArchConv is the masked convolution on the dataset's periodic 2-D
	// lattice (model.ConvConfig).
	ArchConv ArchKind = "conv"
)

// ArchKinds lists the networks.
var ArchKinds = []ArchKind{ArchDense, ArchConv}

// String returns the network's name.
func (k ArchKind) String() string { return string(k) }

// MarshalText returns the network's name.
func (k ArchKind) MarshalText() ([]byte, error) { return []byte(k), nil }

// UnmarshalText reads a network's name.
func (k *ArchKind) UnmarshalText(b []byte) error { return textenum.Parse(k, b, ArchKinds, "arch") }

// Schedule is the learning-rate schedule of a run.
type Schedule string

// The schedules.
const (
	// SchedulePlateau multiplies the rate by Settings.PlateauFactor after
	// Settings.PlateauPatience epochs without improvement.
	SchedulePlateau Schedule = "plateau"
	// ScheduleCosine decays the rate from Settings.LR to Settings.MinLR
	// along half a cosine over Settings.Epochs.
	ScheduleCosine Schedule = "cosine"
	// ScheduleConstant keeps the rate.
	ScheduleConstant Schedule = "constant"
)

// Schedules lists the schedules.
var Schedules = []Schedule{SchedulePlateau, ScheduleCosine, ScheduleConstant}

// String returns the schedule's name.
func (s Schedule) String() string { return string(s) }

// MarshalText returns the schedule's name.
func (s Schedule) MarshalText() ([]byte, error) { return []byte(s), nil }

// UnmarshalText reads a schedule's name.
func (s *Schedule) UnmarshalText(b []byte) error { return textenum.Parse(s, b, Schedules, "schedule") }

// StopReason says why a run ended, like gonum's optimize.Status.
type StopReason int

// The reasons a run stops.
const (
	// NotStopped: the run has not ended.
	NotStopped StopReason = iota
	// StopMaxEpochs: the maximum number of epochs was reached.
	StopMaxEpochs
	// StopEarly: the validation loss did not improve for Patience epochs.
	StopEarly
	// StopAfterLimit: Options.StopAfter epochs were run.
	StopAfterLimit
	// StopInterrupted: the context was cancelled during an epoch.
	StopInterrupted
)

var stopNames = [...]string{"", "max epochs", "early stopping", "stop-after limit", "interrupted"}

// String returns the text a checkpoint's header records (Header.Stopped).
func (s StopReason) String() string { return textenum.Name(stopNames[:], int(s), "StopReason") }

// MarshalText returns the reason's text.
func (s StopReason) MarshalText() ([]byte, error) {
	return textenum.Marshal(stopNames[:], int(s), "stop reason")
}

// UnmarshalText reads a reason's text.
func (s *StopReason) UnmarshalText(b []byte) error {
	return textenum.Index(s, b, stopNames[:], "stop reason")
}
