package train

import "math"

// lrSchedule moves the learning rate between epochs.
type lrSchedule interface {
	// epochRate returns the rate for epoch (from 1), given the current rate
	// lr and scale, the factor by which recoveries from a non-finite loss
	// have cut the rate (0 when none has).
	epochRate(epoch int, lr, scale float64) float64
	// stalled returns the rate after an epoch without improvement, the
	// sincePlateau-th in a row, and whether that count starts again.
	stalled(lr float64, sincePlateau int) (float64, bool)
}

// newSchedule returns the schedule st names.
func newSchedule(st Settings) lrSchedule {
	switch st.Schedule {
	case ScheduleCosine:
		return cosineSchedule{lr: st.LR, min: st.MinLR, epochs: st.Epochs}
	case SchedulePlateau:
		return plateauSchedule{patience: st.PlateauPatience, factor: st.PlateauFactor, min: st.MinLR}
	}
	return constantSchedule{}
}

// constantSchedule keeps the rate.
type constantSchedule struct{}

func (constantSchedule) epochRate(_ int, lr, _ float64) float64 { return lr }

func (constantSchedule) stalled(lr float64, _ int) (float64, bool) { return lr, false }

// cosineSchedule decays the rate from lr to min along half a cosine over
// epochs (I. Loshchilov and F. Hutter, ICLR 2017, without restarts).
type cosineSchedule struct {
	lr, min float64
	epochs  int
}

func (c cosineSchedule) epochRate(epoch int, _, scale float64) float64 {
	if scale == 0 {
		scale = 1
	}
	return scale * (c.min + 0.5*(c.lr-c.min)*(1+math.Cos(math.Pi*float64(epoch-1)/float64(c.epochs))))
}

func (cosineSchedule) stalled(lr float64, _ int) (float64, bool) { return lr, false }

// plateauSchedule multiplies the rate by factor, down to min, after
// patience epochs without improvement.
type plateauSchedule struct {
	patience int
	factor   float64
	min      float64
}

func (plateauSchedule) epochRate(_ int, lr, _ float64) float64 { return lr }

func (p plateauSchedule) stalled(lr float64, sincePlateau int) (float64, bool) {
	if sincePlateau >= p.patience && lr > p.min {
		return math.Max(lr*p.factor, p.min), true
	}
	return lr, false
}
