package remap

import (
	"fmt"

	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// Layout is the order of a 3-D field's values: which index runs fastest.
type Layout uint8

const (
	// LevelFastest stores the field as [column][level]: index = column*nlev + k. A
	// column's values are contiguous, which suits column physics; it is the layout of
	// ApplyColumnsTo and the default.
	LevelFastest Layout = iota
	// ColumnFastest stores the field as [level][column]: index = k*ncol + column, the
	// order of a CF/UGRID NetCDF variable with dimensions (level, column).
	ColumnFastest
)

func (l Layout) String() string {
	switch l {
	case LevelFastest:
		return "level-fastest"
	case ColumnFastest:
		return "column-fastest"
	}
	return fmt.Sprintf("Layout(%d)", uint8(l))
}

// Factored is a 3-D map kept as the Kronecker product H ⊗ V of a horizontal map H
// (target columns × source columns) and a vertical map V (target levels × source levels),
// never expanded: (H ⊗ V)[(i,t),(j,s)] = H_ij V_ts. ApplyTo costs
// O(min(nnz_H·nlev_t + ncol_s·nnz_V, nnz_H·nlev_s + ncol_t·nnz_V)) operations and one
// intermediate field, against O(nnz_H·nnz_V) for the expanded matrix.
//
// The same vertical map applies in every column; a map whose vertical part depends on the
// column's measure is applied as VerticalMap.ApplyColumnsTo followed by the horizontal map.
type Factored struct {
	H, V   *weights.CSR
	Layout Layout
	work   []float64
}

// ApplyFactoredTo computes dst = (h ⊗ v)·src for fields in the given layout; see Factored.
// It allocates the intermediate field; Factored.ApplyTo reuses it.
func ApplyFactoredTo(dst, src []float64, h, v *weights.CSR, layout Layout) {
	f := Factored{H: h, V: v, Layout: layout}
	f.ApplyTo(dst, src)
}

// ApplyTo computes dst = (H ⊗ V)·src: len(src) = H.Cols·V.Cols, len(dst) = H.Rows·V.Rows,
// both in f.Layout. It applies whichever of (H ⊗ I)(I ⊗ V) and (I ⊗ V)(H ⊗ I) costs fewer
// operations (equal in exact arithmetic; the rounding differs by a few ulps), splitting
// the work over GOMAXPROCS goroutines in blocks that do not depend on their number. It
// reuses an intermediate buffer, so one Factored must not be applied from two goroutines
// at once. It panics on length mismatch or an unknown layout.
func (f *Factored) ApplyTo(dst, src []float64) {
	h, v := f.H, f.V
	if len(src) != h.Cols*v.Cols || len(dst) != h.Rows*v.Rows {
		panic(fmt.Sprintf("remap: factored apply: src %d, dst %d for %d × %d columns and %d × %d levels", len(src), len(dst), h.Rows, h.Cols, v.Rows, v.Cols))
	}
	if f.Layout != LevelFastest && f.Layout != ColumnFastest {
		panic(fmt.Sprintf("remap: factored apply: unknown layout %v", f.Layout))
	}
	vFirst := h.Cols*v.NNZ()+h.NNZ()*v.Rows <= h.NNZ()*v.Cols+h.Rows*v.NNZ()
	if vFirst {
		f.work = grow(f.work, h.Cols*v.Rows)
		f.vertical(f.work, src, h.Cols)
		f.horizontal(dst, f.work, v.Rows)
	} else {
		f.work = grow(f.work, h.Rows*v.Cols)
		f.horizontal(f.work, src, v.Cols)
		f.vertical(dst, f.work, h.Rows)
	}
}

func grow(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}

// vertical applies I ⊗ V to ncol columns.
func (f *Factored) vertical(dst, src []float64, ncol int) {
	v := f.V
	nt, ns := v.Rows, v.Cols
	if f.Layout == LevelFastest {
		par.For(ncol, 0, 256, func(lo, hi int) {
			for c := lo; c < hi; c++ {
				applyCSR(dst[c*nt:(c+1)*nt], src[c*ns:(c+1)*ns], v)
			}
		})
		return
	}
	// Column-fastest: level t of dst is Σ_s V_ts · (level s of src), in column blocks.
	par.For(ncol, 0, 4096, func(lo, hi int) {
		for t := 0; t < nt; t++ {
			d := dst[t*ncol+lo : t*ncol+hi]
			clear(d)
			for k := v.RowStart[t]; k < v.RowStart[t+1]; k++ {
				w := v.Values[k]
				s := int(v.ColIndex[k])
				x := src[s*ncol+lo : s*ncol+hi]
				for c := range d {
					d[c] += w * x[c]
				}
			}
		}
	})
}

// horizontal applies H ⊗ I to fields of nlev levels.
func (f *Factored) horizontal(dst, src []float64, nlev int) {
	h := f.H
	if f.Layout == LevelFastest {
		// [column][level] is H applied to nlev interleaved vectors.
		par.For(h.Rows, 0, max(1<<14/nlev, 64), func(lo, hi int) {
			for i := lo; i < hi; i++ {
				d := dst[i*nlev : (i+1)*nlev]
				clear(d)
				for k := h.RowStart[i]; k < h.RowStart[i+1]; k++ {
					w := h.Values[k]
					j := int(h.ColIndex[k]) * nlev
					x := src[j : j+nlev]
					for l := range d {
						d[l] += w * x[l]
					}
				}
			}
		})
		return
	}
	nt, ns := h.Rows, h.Cols
	par.For(nt, 0, 1<<12, func(lo, hi int) {
		for k := 0; k < nlev; k++ {
			d, x := dst[k*nt:(k+1)*nt], src[k*ns:(k+1)*ns]
			for i := lo; i < hi; i++ {
				var s float64
				for p := h.RowStart[i]; p < h.RowStart[i+1]; p++ {
					s += h.Values[p] * x[h.ColIndex[p]]
				}
				d[i] = s
			}
		}
	})
}
