//go:build !unix

package main

import "math"

// cpuSeconds is not measured off Unix: cores busy reads NaN.
func cpuSeconds() float64 { return math.NaN() }
