package conserve

import (
	"math"

	"github.com/colbridge/colbridge/weights"
)

// fullyCovered reports whether entry i of a coverage vector (nil: unknown) counts as fully
// covered.
func fullyCovered(cov []float64, i int) bool {
	return cov == nil || cov[i] >= 1-CoverageTol
}

// ColumnSumsTo sets dst[s] = c_s = Σ_t m_t W_ts / m_s, the conservation sums of DESIGN.md
// §5, with compensated summation (each c_s is then within a few ulps of the exact sum of
// the stored products). Columns with m_s = 0 get NaN. It panics on length mismatch.
func ColumnSumsTo(dst []float64, w *weights.CSR, ms, mt []float64) {
	if len(ms) != w.Cols || len(mt) != w.Rows {
		panic("conserve: ColumnSumsTo: measure lengths do not match the matrix")
	}
	w.ColSumsTo(dst, mt)
	for s := range dst {
		if ms[s] > 0 {
			dst[s] /= ms[s]
		} else {
			dst[s] = math.NaN()
		}
	}
}

// CheckConservation runs the conservation check on W with source measures ms, target
// measures mt and source coverage covS (nil: unknown, all columns count). fields are
// source vectors for the global mass budget (may be nil). It panics on length mismatch.
func CheckConservation(w *weights.CSR, ms, mt, covS []float64, fields []NamedVector) *ConservationReport {
	c := make([]float64, w.Cols)
	ColumnSumsTo(c, w, ms, mt)
	r := &ConservationReport{MaxDefectAt: -1, Defects: make([]float64, w.Cols)}
	var sq weights.Accumulator
	for s, cs := range c {
		r.Defects[s] = -1
		switch {
		case !(ms[s] > 0):
			r.SkippedZeroMeasure++
			continue
		case !fullyCovered(covS, s):
			r.SkippedPartial++
			continue
		}
		d := math.Abs(cs - 1)
		r.Defects[s] = d
		r.Checked++
		sq.Add(d * d)
		if d > r.MaxDefect || r.MaxDefectAt < 0 {
			r.MaxDefect, r.MaxDefectAt, r.ColumnSumAtMax = d, s, cs
		}
	}
	if r.Checked > 0 {
		r.RMSDefect = math.Sqrt(sq.Sum() / float64(r.Checked))
	}
	r.Histogram = newHistogram(r.Defects)
	y := make([]float64, w.Rows)
	for _, f := range fields {
		w.ApplyTo(y, f.Values)
		fm := massBudget(f.Name, f.Values, y, ms, mt, covS)
		r.Fields = append(r.Fields, fm)
		r.MaxMassError = math.Max(r.MaxMassError, math.Abs(fm.RelativeError))
	}
	return r
}

// massBudget compares Σ m_s κ_s x_s with Σ m_t y_t.
func massBudget(name string, x, y, ms, mt, covS []float64) FieldMass {
	var src, abs, tgt weights.Accumulator
	for s, v := range x {
		k := ms[s]
		if covS != nil {
			k *= covS[s]
		}
		src.Add(k * v)
		abs.Add(k * math.Abs(v))
	}
	for t, v := range y {
		tgt.Add(mt[t] * v)
	}
	fm := FieldMass{Name: name, SourceIntegral: src.Sum(), TargetIntegral: tgt.Sum()}
	if a := abs.Sum(); a > 0 {
		fm.RelativeError = (fm.TargetIntegral - fm.SourceIntegral) / a
	}
	return fm
}

// NamedVector is a named vector of values on one side of a map.
type NamedVector struct {
	Name   string
	Values []float64
}
