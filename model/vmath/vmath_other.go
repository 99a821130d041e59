//go:build !amd64 || purego

package vmath

// useAsm is false: no assembly on this architecture or with purego.
const useAsm = false

func softplusAsm(dst, src *float64, n int)    { panic("vmath: no assembly") }
func sigmoidMulAsm(dst, d, a *float64, n int) { panic("vmath: no assembly") }

func adamAsm(w, g, m, v *float64, n int, c *[9]float64, decay int) { panic("vmath: no assembly") }
