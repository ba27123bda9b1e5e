package conserve

import "math"

// histogramEdges are the fixed log₁₀ bin edges of every defect histogram: one bin per
// decade from 1e-17 (below the rounding of a unit sum) to 10.
var histogramEdges = []float64{-17, -16, -15, -14, -13, -12, -11, -10, -9, -8, -7, -6, -5, -4, -3, -2, -1, 0, 1}

// newHistogram counts the non-negative values of ds (negative entries mean "not checked"
// and are skipped).
func newHistogram(ds []float64) Histogram {
	h := Histogram{Log10Edges: append([]float64(nil), histogramEdges...), Counts: make([]int, len(histogramEdges)-1)}
	for _, d := range ds {
		switch {
		case d < 0:
		case d == 0:
			h.Zero++
		default:
			l := math.Log10(d)
			if l < histogramEdges[0] {
				h.Below++
				continue
			}
			if l >= histogramEdges[len(histogramEdges)-1] {
				h.Above++
				continue
			}
			i := int(math.Floor(l - histogramEdges[0]))
			i = min(max(i, 0), len(h.Counts)-1)
			h.Counts[i]++
		}
	}
	return h
}
