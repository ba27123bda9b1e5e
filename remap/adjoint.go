package remap

import (
	"errors"
	"fmt"
	"math"

	"github.com/colbridge/colbridge/weights"
)

// ErrMeasure is returned when a map lacks a measure an operation needs.
var ErrMeasure = errors.New("missing or unusable measure")

// Adjoint returns the adjoint of w with respect to the inner products its two sides'
// measures define, ⟨x, y⟩_s = Σ_j m_s,j x_j y_j and ⟨a, b⟩_t = Σ_i m_t,i a_i b_i:
//
//	W* = M_s⁻¹ Wᵀ M_t,   (W*)_ji = m_t,i W_ij / m_s,j,
//
// the unique map with ⟨W x, y⟩_t = ⟨x, W* y⟩_s for all x, y (tested to 1e-13 relative for
// every restriction in this package). It is the default prolongation of increments
// (DESIGN.md §4): whatever energy or mass the restriction shows the physics, the
// prolongation hands back the same amount. Its properties mirror w's (Ullrich & Taylor
// 2015; DESIGN.md §5), exactly, because they are the same sums:
//
//   - row sums of W* are the conservation ratios c_j = Σ_i m_t,i W_ij / m_s,j of W, so W
//     is conservative ⇔ W* is consistent;
//   - the conservation ratios of W* are the row sums of W, so W is consistent ⇔ W* is
//     conservative.
//
// Accuracy is not inherited: the adjoint of a consistent restriction need not be
// consistent. For the Perot reconstruction it is consistent only on orthogonal meshes
// (see EdgeSkew and ColumnWinds for the measured consequences on the cubed sphere).
//
// The result's source is w's target and its target w's source (measures and coverages
// travel with them), Method AdjointMethod, Attrs["adjoint_of"] = w.Method, Order 0 (the
// accuracy of an adjoint is a property of the pair, measured by the audit, not of the
// construction). Adjoint(Adjoint(w)) has w's matrix to rounding.
//
// It returns an error wrapping ErrMeasure when either side has no measure, or when a
// source degree of freedom that w reads (a non-empty column) has a measure that is not
// positive: W* would have to divide by it. Target measures may be zero (those rows
// contribute nothing).
func Adjoint(w *weights.Map) (*weights.Map, error) {
	if err := w.Check(); err != nil {
		return nil, err
	}
	ms, mt := w.Source.Measure, w.Target.Measure
	if ms == nil {
		return nil, fmt.Errorf("%w: the source (%v on %q) of the %q map has no measure", ErrMeasure, w.Source.Location, w.Source.MeshName, w.Method)
	}
	if mt == nil {
		return nil, fmt.Errorf("%w: the target (%v on %q) of the %q map has no measure", ErrMeasure, w.Target.Location, w.Target.MeshName, w.Method)
	}
	t := w.W.T() // rows: sources j, columns: targets i
	for j := 0; j < t.Rows; j++ {
		if t.RowStart[j] == t.RowStart[j+1] {
			continue
		}
		if !(ms[j] > 0) || math.IsInf(ms[j], 0) {
			return nil, fmt.Errorf("%w: source %d (%v on %q) of the %q map has measure %v; the adjoint divides by it",
				ErrMeasure, j, w.Source.Location, w.Source.MeshName, w.Method, ms[j])
		}
	}
	inv := make([]float64, len(ms))
	for j, m := range ms {
		if m > 0 {
			inv[j] = 1 / m
		}
	}
	for j := 0; j < t.Rows; j++ {
		for p := t.RowStart[j]; p < t.RowStart[j+1]; p++ {
			// m_t,i W_ij / m_s,j, one rounding per operation as written.
			t.Values[p] = mt[t.ColIndex[p]] * t.Values[p] * inv[j]
		}
	}
	a := &weights.Map{
		W:          t,
		Source:     w.Target,
		Target:     w.Source,
		Method:     AdjointMethod,
		Provenance: w.Provenance,
		Attrs:      withAttr(w.Attrs, "adjoint_of", w.Method),
	}
	if w.Normalization != "" {
		a.Attrs["adjoint_normalization"] = w.Normalization
	}
	return a, a.Check()
}
