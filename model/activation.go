package model

import (
	"fmt"

	"tidemark/data/textenum"
)

// Activation is the nonlinearity of a model's hidden layers.
type Activation string

// The activations.
const (
	// ReLU is max(z, 0).
	ReLU Activation = "relu"
	// Tanh is tanh z.
	Tanh Activation = "tanh"
	// Softplus is log(1 + e^z), smooth in z.
	Softplus Activation = "softplus"
)

// Activations lists the supported activations.
var Activations = []Activation{ReLU, Tanh, Softplus}

// String returns the activation's name.
func (a Activation) String() string { return string(a) }

// MarshalText returns the activation's name.
func (a Activation) MarshalText() ([]byte, error) { return []byte(a), nil }

// UnmarshalText reads an activation's name; the empty text is the unset
// activation (Config.CondActivation's default).
func (a *Activation) UnmarshalText(b []byte) error {
	if len(b) == 0 {
		*a = ""
		return nil
	}
	return textenum.Parse(a, b, Activations, "activation")
}

// ParseActivation reads an activation's name.
func ParseActivation(s string) (Activation, error) {
	var a Activation
	if err := a.UnmarshalText([]byte(s)); err != nil {
		return "", err
	}
	if a == "" {
		return "", fmt.Errorf("activation: expected one of %v, found none", Activations)
	}
	return a, nil
}

// kernelCode returns the activation's code in the vector kernels (actRelu,
// actTanh, actSoftplus).
func (a Activation) kernelCode() int {
	switch a {
	case Tanh:
		return actTanh
	case Softplus:
		return actSoftplus
	}
	return actRelu
}
