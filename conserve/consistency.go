package conserve

import (
	"math"

	"github.com/colbridge/colbridge/weights"
)

// coveredTargets returns which targets the consistency check covers: all of them when the
// coverage is unknown; those with any coverage when the map normalises by the covered part
// ("covered": constants are preserved wherever there is data); the fully covered ones
// otherwise.
func coveredTargets(cov []float64, normalization string, n int) []bool {
	ok := make([]bool, n)
	for t := range ok {
		switch {
		case cov == nil:
			ok[t] = true
		case normalization == "covered":
			ok[t] = cov[t] > 0
		default:
			ok[t] = cov[t] >= 1-CoverageTol
		}
	}
	return ok
}

// CheckConsistency runs the consistency check: the row sums Σ_s W_ts (compensated) must be 1
// on the covered targets (nil: all).
func CheckConsistency(w *weights.CSR, covered []bool) ConsistencyReport {
	sums := make([]float64, w.Rows)
	w.RowSumsTo(sums)
	r := ConsistencyReport{MaxDefectAt: -1}
	ds := make([]float64, w.Rows)
	var sq weights.Accumulator
	for t, s := range sums {
		ds[t] = -1
		if covered != nil && !covered[t] {
			r.Skipped++
			continue
		}
		r.Checked++
		if w.RowStart[t] == w.RowStart[t+1] {
			r.EmptyRows++
		}
		d := math.Abs(s - 1)
		ds[t] = d
		sq.Add(d * d)
		if d > r.MaxDefect || r.MaxDefectAt < 0 {
			r.MaxDefect, r.MaxDefectAt, r.RowSumAtMax = d, t, s
		}
	}
	if r.Checked > 0 {
		r.RMSDefect = math.Sqrt(sq.Sum() / float64(r.Checked))
	}
	r.Histogram = newHistogram(ds)
	r.Defects = ds
	return r
}
