package grids

import (
	"math"

	"gonum.org/v1/gonum/floats"
)

// compensatedSum returns the Kahan–Babuška sum of xs: exact to about one rounding of the
// result whatever the number of terms.
func compensatedSum(xs []float64) float64 { return floats.SumCompensated(xs) }

func floor(x float64) float64 { return math.Floor(x) }
