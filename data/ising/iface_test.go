package ising

import "tidemark/indicator"

// Source is an exact density source for the indicators.
var (
	_ indicator.Sampler    = (*Source)(nil)
	_ indicator.Enumerable = (*Source)(nil)
)
