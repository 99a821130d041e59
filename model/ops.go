package model

import (
	"fmt"
	"hash/fnv"

	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// The hand-written gorgonia operations (maskedOp, bernoulliOp, filmOp)
// share these two pieces of their gorgonia.Op methods.

// opArity is a gorgonia operation that knows its number of inputs.
type opArity interface {
	fmt.Stringer
	Arity() int
}

// matrixInput checks the input shapes of op's InferShape: op.Arity() of
// them, the first a matrix, which it returns.
func matrixInput(op opArity, in []G.DimSizer) (tensor.Shape, error) {
	if len(in) != op.Arity() {
		return nil, fmt.Errorf("model: %v needs %d inputs, found %d", op, op.Arity(), len(in))
	}
	s0, ok := in[0].(tensor.Shape)
	if !ok || len(s0) != 2 {
		return nil, fmt.Errorf("model: %v needs a matrix input, found %v", op, in[0])
	}
	return s0, nil
}

// opHash is an operation's Hashcode: the FNV-1a hash of its name, which
// WriteHash writes.
func opHash(op fmt.Stringer) uint32 {
	h := fnv.New32a()
	fmt.Fprint(h, op.String())
	return h.Sum32()
}
