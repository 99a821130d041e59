package checkpoints

import (
	"fmt"
	"io"
	"os"
	"strings"
	"text/tabwriter"

	"tidemark/data"
	"tidemark/model"
)

// Description is what a checkpoint file holds, as "tidemark inspect"
// prints it; its JSON keys are stable.
type Description struct {
	Kind               string          `json:"kind"`
	File               string          `json:"file"`
	FileBytes          int64           `json:"file_bytes"`
	Software           string          `json:"software_version"`
	Created            string          `json:"created"`
	Architecture       ArchDescription `json:"architecture"`
	Parameters         int             `json:"parameters"`
	Sites              int             `json:"sites"`
	Alphabet           int             `json:"alphabet"`
	Lattice            []int           `json:"lattice"`
	ParamNames         []string        `json:"param_names"`
	Dataset            DatasetInfo     `json:"dataset"`
	HeldOut            [][]float64     `json:"held_out"`
	HoldoutSpec        string          `json:"holdout_spec"`
	BestEpoch          int             `json:"best_epoch"`
	BestValBitsPerSite float64         `json:"best_val_bits_per_site"`
	BestValStdErr      float64         `json:"best_val_stderr_bits_per_site,omitempty"`
	HeldOutBitsPerSite *float64        `json:"heldout_bits_per_site"`
	Epochs             int             `json:"epochs_completed"`
	Stopped            string          `json:"stopped"`
	Training           Training        `json:"training"`
	Metrics            []EpochMetrics  `json:"metrics"`
	// Ensemble is the file's place in an ensemble; absent for a single
	// model.
	Ensemble *EnsembleMember `json:"ensemble,omitempty"`
	// EnsembleFiles lists, for member 1, the files of every member (its
	// own first) and whether each is present.
	EnsembleFiles []EnsembleFile `json:"ensemble_files,omitempty"`
}

// EnsembleFile is one member's file as inspect lists it.
type EnsembleFile struct {
	File    string `json:"file"`
	Present bool   `json:"present"`
}

// ArchDescription describes the model's architecture.
type ArchDescription struct {
	Hidden     []int  `json:"hidden"`
	CondHidden []int  `json:"cond_hidden"`
	Fourier    int    `json:"fourier"`
	Activation string `json:"activation"`
	CondAct    string `json:"cond_activation"`
	Direct     bool   `json:"direct"`
	// DirectWindow is the direct connection's window on the lattice
	// (model.Config.DirectWindow); absent when every earlier site is in.
	DirectWindow int    `json:"direct_window,omitempty"`
	Order        string `json:"order"`
	Symmetric    bool   `json:"symmetric"`
	// Conv is the convolutional network's lattice and window; absent for
	// the dense MADE.
	Conv    *model.ConvConfig `json:"conv,omitempty"`
	FiLM    bool              `json:"film"`
	ParamLo []float64         `json:"param_lo"`
	ParamHi []float64         `json:"param_hi"`
}

// Describe loads the checkpoint file path and describes it.
func Describe(path string) (*Description, error) {
	ck, err := Load(path)
	if err != nil {
		return nil, err
	}
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	h := ck.Header
	c := h.Model
	r := Description{
		Kind: "checkpoint", File: path, FileBytes: st.Size(), Software: h.Software, Created: h.Created,
		Architecture: ArchDescription{Hidden: c.Hidden, CondHidden: c.CondHidden, Fourier: c.Fourier, Activation: string(c.Activation), CondAct: condActivation(c),
			Direct: c.Direct, DirectWindow: c.DirectWindow, Order: h.Training.OrderName, Symmetric: c.Symmetric, FiLM: c.FiLM, Conv: c.Conv, ParamLo: c.ParamLo, ParamHi: c.ParamHi},
		Parameters: ck.NumParams(), Sites: c.Sites, Alphabet: c.Alphabet, Lattice: h.Lattice, ParamNames: h.ParamNames,
		Dataset: h.Dataset, HeldOut: h.HeldOut, HoldoutSpec: h.HoldoutSpec,
		BestEpoch: h.BestEpoch, BestValBitsPerSite: h.BestValBitsPerSite, BestValStdErr: h.BestValStdErrBitsPerSite, HeldOutBitsPerSite: h.HeldOutBitsPerSite,
		Epochs: h.Optimizer.Epoch, Stopped: h.Stopped, Training: h.Training, Metrics: h.Metrics,
	}
	if r.HeldOut == nil {
		r.HeldOut = [][]float64{}
	}
	if r.Metrics == nil {
		r.Metrics = []EpochMetrics{}
	}
	r.Dataset.Source = nil
	if e := h.Ensemble; e != nil {
		r.Ensemble = e
		for k := 1; e.Member == 1 && k <= e.Size; k++ {
			_, err := os.Stat(MemberPath(path, k))
			r.EnsembleFiles = append(r.EnsembleFiles, EnsembleFile{File: MemberPath(path, k), Present: err == nil})
		}
	}
	return &r, nil
}

// WriteText prints the description as aligned lines of text and the table
// of epochs.
func (r *Description) WriteText(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "checkpoint\t%s (%s), written by tidemark %s at %s\n", r.File, data.HumanBytes(r.FileBytes), r.Software, r.Created)
	a := r.Architecture
	cond := "none"
	if len(a.CondHidden) > 0 {
		cond = intsString(a.CondHidden, ",")
	}
	mod := "shifts"
	if a.FiLM {
		mod = "scales and shifts (FiLM)"
	}
	freq := "frequencies"
	if a.Fourier == 1 {
		freq = "frequency"
	}
	kind := "MADE, hidden"
	if a.Conv != nil {
		kind = fmt.Sprintf("masked convolution on %d×%d (periodic), window %d, channels", a.Conv.Height, a.Conv.Width, a.Conv.Window)
	}
	direct := fmt.Sprint(a.Direct)
	if a.Direct && a.DirectWindow > 0 {
		direct = fmt.Sprintf("from earlier sites within %d on the lattice", a.DirectWindow)
	}
	fmt.Fprintf(tw, "architecture\t%s %s, %s; conditioning net %s, %s, with %d Fourier %s, %s the layers; direct %s; order %s; symmetric %v\n",
		kind, intsString(a.Hidden, ","), a.Activation, cond, a.CondAct, a.Fourier, freq, mod, direct, a.Order, a.Symmetric)
	fmt.Fprintf(tw, "parameters\t%d trainable values\n", r.Parameters)
	fmt.Fprintf(tw, "sites\t%d (lattice %s), alphabet %d\n", r.Sites, intsString(r.Lattice, "×"), r.Alphabet)
	for i, name := range r.ParamNames {
		fmt.Fprintf(tw, "parameter\t%s, normalised from [%g, %g]\n", name, a.ParamLo[i], a.ParamHi[i])
	}
	d := r.Dataset
	fmt.Fprintf(tw, "dataset\t%s: %d snapshots, %d grid points, fingerprint %s\n", d.Path, d.Snapshots, d.Points, d.Fingerprint)
	if len(r.HeldOut) == 0 {
		fmt.Fprintf(tw, "held out\tnone\n")
	} else {
		pts := make([]string, len(r.HeldOut))
		for i, p := range r.HeldOut {
			pts[i] = data.FormatPoint(r.ParamNames, p)
		}
		ho := ""
		if r.HeldOutBitsPerSite != nil {
			ho = fmt.Sprintf("; best weights score %.5f bits/site there", *r.HeldOutBitsPerSite)
		}
		fmt.Fprintf(tw, "held out\t%s (%q)%s\n", strings.Join(pts, "; "), r.HoldoutSpec, ho)
	}
	t := r.Training
	fmt.Fprintf(tw, "training\tseed %d, batch %d, lr %g (%s schedule), val-frac %g, patience %d, clip %g, weight decay %g, threads %d\n",
		t.Seed, t.Batch, t.LR, t.Schedule, t.ValFrac, t.Patience, t.Clip, t.WeightDecay, t.Threads)
	fmt.Fprintf(tw, "samples\t%d training, %d validation, %d held out\n", t.TrainSnapshots, t.ValSnapshots, t.HeldSnapshots)
	if len(t.Augment) > 0 {
		fmt.Fprintf(tw, "augmented\tby %s\n", strings.Join(t.Augment, ", "))
	}
	if t.AverageEpochs > 0 {
		fmt.Fprintf(tw, "weights\tmoving average over %g epochs (validated and kept)\n", t.AverageEpochs)
	}
	if e := r.Ensemble; e != nil {
		var files []string
		for _, f := range r.EnsembleFiles {
			if !f.Present {
				f.File += " (missing)"
			}
			files = append(files, f.File)
		}
		also := ""
		if len(files) > 0 {
			also = "; members " + strings.Join(files, ", ") + " (scan --model " + r.File + " uses them all)"
		}
		fmt.Fprintf(tw, "ensemble\tmember %d of %d, bootstrap resample seed %d, ensemble seed %d%s\n", e.Member, e.Size, e.BagSeed, e.BaseSeed, also)
	}
	stopped := r.Stopped
	if stopped == "" {
		stopped = "still running or killed"
	}
	fmt.Fprintf(tw, "epochs\t%d completed of at most %d (%s); best epoch %d, validation %s bits/site\n", r.Epochs, t.Epochs, stopped, r.BestEpoch,
		WithError(r.BestValBitsPerSite, r.BestValStdErr, 5))
	if err := tw.Flush(); err != nil {
		return err
	}
	if len(r.Metrics) > 0 {
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "epoch\ttrain bits/site\tval bits/site\tsamples/s\tseconds\tlr\t\t")
		for _, m := range r.Metrics {
			mark := ""
			if m.Epoch == r.BestEpoch {
				mark = "best"
			}
			fmt.Fprintf(tw, "%d\t%.5f\t%.5f\t%.0f\t%.2f\t%.3g\t%s\t\n", m.Epoch, m.TrainBitsPerSite, m.ValBitsPerSite, m.SamplesPerS, m.Seconds, m.LR, mark)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
	}
	return nil
}

// intsString joins whole numbers with sep.
func intsString(v []int, sep string) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmt.Sprint(x)
	}
	return strings.Join(s, sep)
}

// condActivation is the conditioning net's activation ("" in a configuration
// means the same as the hidden layers').
func condActivation(c model.Config) string {
	if c.CondActivation == "" {
		return string(c.Activation)
	}
	return string(c.CondActivation)
}
