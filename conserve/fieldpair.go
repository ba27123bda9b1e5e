package conserve

import (
	"fmt"
	"github.com/colbridge/colbridge/weights"
	"math"

	"github.com/colbridge/colbridge/internal/ncio"
)

// FieldPairReport is the direct conservation check of real data: the same field before
// and after a coupler (any coupler), integrated with each side's measures.
type FieldPairReport struct {
	Variable string `json:"variable"`
	Before   string `json:"before"`
	After    string `json:"after"`
	// Slices are the leading-dimension slices (times, levels...) compared one by one.
	Slices []FieldPairSlice `json:"slices"`
	// MaxRelativeError is the largest |∫after − ∫before| / ∫|before| over the slices.
	MaxRelativeError float64 `json:"max_relative_error"`
	// Missing counts values skipped as _FillValue/missing/NaN on either side.
	MissingBefore int `json:"missing_before"`
	MissingAfter  int `json:"missing_after"`
}

// FieldPairSlice is one slice of a field pair.
type FieldPairSlice struct {
	Index         int     `json:"index"`
	Before        float64 `json:"integral_before"`
	After         float64 `json:"integral_after"`
	RelativeError float64 `json:"relative_error"`
}

// CheckFieldPair reads variable name from the before file (on the source side, measure
// ms) and from the after file (target side, measure mt) — the last dimension is the
// horizontal one and must match the measures' lengths; every leading dimension is a
// slice — and compares the global integrals Σ m f with compensated sums. Missing values
// (_FillValue, missing_value, NaN) are skipped and counted.
func CheckFieldPair(before, after, name string, ms, mt []float64) (*FieldPairReport, error) {
	b, err := readField(before, name, len(ms))
	if err != nil {
		return nil, err
	}
	a, err := readField(after, name, len(mt))
	if err != nil {
		return nil, err
	}
	if len(b.values)/len(ms) != len(a.values)/len(mt) {
		return nil, fmt.Errorf("%s has %d slices of %q, %s has %d", before, len(b.values)/len(ms), name, after, len(a.values)/len(mt))
	}
	rep := &FieldPairReport{Variable: name, Before: before, After: after, Slices: []FieldPairSlice{}}
	n := len(b.values) / len(ms)
	for s := 0; s < n; s++ {
		var ib, ia, ab weights.Accumulator
		for i, m := range ms {
			x := b.values[s*len(ms)+i]
			if b.missing(x) {
				rep.MissingBefore++
				continue
			}
			ib.Add(m * x)
			ab.Add(m * math.Abs(x))
		}
		for i, m := range mt {
			x := a.values[s*len(mt)+i]
			if a.missing(x) {
				rep.MissingAfter++
				continue
			}
			ia.Add(m * x)
		}
		sl := FieldPairSlice{Index: s, Before: ib.Sum(), After: ia.Sum()}
		if d := ab.Sum(); d > 0 {
			sl.RelativeError = (sl.After - sl.Before) / d
		}
		rep.MaxRelativeError = math.Max(rep.MaxRelativeError, math.Abs(sl.RelativeError))
		rep.Slices = append(rep.Slices, sl)
	}
	return rep, nil
}

type field struct {
	values      []float64
	fill        float64
	hasFill     bool
	missingVals []float64
}

func (f *field) missing(x float64) bool {
	if math.IsNaN(x) || (f.hasFill && x == f.fill) {
		return true
	}
	for _, m := range f.missingVals {
		if x == m {
			return true
		}
	}
	return false
}

func readField(path, name string, n int) (*field, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	v, err := f.Var(name)
	if err != nil {
		return nil, fmt.Errorf("%s: variable %q: %w", path, name, err)
	}
	if len(v.Shape) == 0 || v.Shape[len(v.Shape)-1] != n {
		return nil, fmt.Errorf("%s: variable %q has shape %v; its last dimension must be the %d cells of the mesh", path, name, v.Shape, n)
	}
	total := 1
	for _, s := range v.Shape {
		total *= s
	}
	out := &field{values: make([]float64, total)}
	if err := f.ReadFloat64s(name, nil, nil, out.values); err != nil {
		return nil, err
	}
	out.fill, out.hasFill, _ = f.FillValue(name)
	out.missingVals, _ = f.MissingValues(name)
	return out, nil
}
