package remap

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// The arithmetic of ApplyFile on fields in NetCDF order: n horizontal slices (levels,
// times) of one variable stored one after the other, slice v occupying
// src[v*ns : (v+1)*ns] ("column-fastest"). No transposes: MultiApplyTo reads the slices
// where the file put them.

// rowBlock is the number of target rows whose index arrays one pass keeps in cache
// while it runs through the vectors: 256 rows of a second-order map (about 16 entries
// each, 12 bytes an entry) are 48 KiB, the size of a level-1 data cache on current x86
// cores.
const rowBlock = 256

var inf = math.Inf(1)

// MultiApplyTo computes dst[v*W.Rows+i] = Σ_k W_ik src[v*W.Cols+k] for the n vectors
// v < n stored one after the other (the order of a NetCDF variable with dimensions
// (…, cell)), or adds that to dst when add is set. Each vector's result is bit for bit
// CSR.ApplyTo's: every row is summed from zero in storage order. Index arrays are read
// once per block of rowBlock rows and reused from cache for all n vectors, which are
// taken eight at a time so that one pass over a row's entries feeds eight sums. Rows are
// split over workers goroutines (≤ 0: GOMAXPROCS). It panics on length mismatch.
func MultiApplyTo(dst, src []float64, w *weights.CSR, n int, add bool, workers int) {
	ns, nt := w.Cols, w.Rows
	if n < 0 || len(src) != n*ns || len(dst) != n*nt {
		panic(fmt.Sprintf("remap: MultiApplyTo: dst %d, src %d for %d vectors and a %d × %d matrix", len(dst), len(src), n, nt, ns))
	}
	if n == 0 || nt == 0 {
		return
	}
	par.For(nt, workers, 4*rowBlock, func(lo, hi int) {
		for rb := lo; rb < hi; rb += rowBlock {
			re := min(rb+rowBlock, hi)
			v := 0
			for ; v+8 <= n; v += 8 {
				multiRows8(dst, src, w, v, rb, re, add)
			}
			for ; v+4 <= n; v += 4 {
				multiRows4(dst, src, w, v, rb, re, add)
			}
			for ; v < n; v++ {
				x := src[v*ns : (v+1)*ns]
				d := dst[v*nt : (v+1)*nt]
				for i := rb; i < re; i++ {
					k0, k1 := w.RowStart[i], w.RowStart[i+1]
					cols := w.ColIndex[k0:k1]
					vals := w.Values[k0:k1]
					vals = vals[:len(cols)]
					var s float64
					for k, c := range cols {
						s += vals[k] * x[c]
					}
					if add {
						d[i] += s
					} else {
						d[i] = s
					}
				}
			}
		}
	})
}

// multiRows8 handles rows [rb, re) of vectors v..v+7.
func multiRows8(dst, src []float64, w *weights.CSR, v, rb, re int, add bool) {
	ns, nt := w.Cols, w.Rows
	x0, x1, x2, x3 := src[v*ns:(v+1)*ns], src[(v+1)*ns:(v+2)*ns], src[(v+2)*ns:(v+3)*ns], src[(v+3)*ns:(v+4)*ns]
	x4, x5, x6, x7 := src[(v+4)*ns:(v+5)*ns], src[(v+5)*ns:(v+6)*ns], src[(v+6)*ns:(v+7)*ns], src[(v+7)*ns:(v+8)*ns]
	d0, d1, d2, d3 := dst[v*nt:(v+1)*nt], dst[(v+1)*nt:(v+2)*nt], dst[(v+2)*nt:(v+3)*nt], dst[(v+3)*nt:(v+4)*nt]
	d4, d5, d6, d7 := dst[(v+4)*nt:(v+5)*nt], dst[(v+5)*nt:(v+6)*nt], dst[(v+6)*nt:(v+7)*nt], dst[(v+7)*nt:(v+8)*nt]
	for i := rb; i < re; i++ {
		k0, k1 := w.RowStart[i], w.RowStart[i+1]
		cols := w.ColIndex[k0:k1]
		vals := w.Values[k0:k1]
		vals = vals[:len(cols)]
		var s0, s1, s2, s3, s4, s5, s6, s7 float64
		for k, c := range cols {
			wk := vals[k]
			s0 += wk * x0[c]
			s1 += wk * x1[c]
			s2 += wk * x2[c]
			s3 += wk * x3[c]
			s4 += wk * x4[c]
			s5 += wk * x5[c]
			s6 += wk * x6[c]
			s7 += wk * x7[c]
		}
		if add {
			d0[i] += s0
			d1[i] += s1
			d2[i] += s2
			d3[i] += s3
			d4[i] += s4
			d5[i] += s5
			d6[i] += s6
			d7[i] += s7
		} else {
			d0[i], d1[i], d2[i], d3[i] = s0, s1, s2, s3
			d4[i], d5[i], d6[i], d7[i] = s4, s5, s6, s7
		}
	}
}

// multiRows4 handles rows [rb, re) of vectors v..v+3.
func multiRows4(dst, src []float64, w *weights.CSR, v, rb, re int, add bool) {
	ns, nt := w.Cols, w.Rows
	x0, x1, x2, x3 := src[v*ns:(v+1)*ns], src[(v+1)*ns:(v+2)*ns], src[(v+2)*ns:(v+3)*ns], src[(v+3)*ns:(v+4)*ns]
	d0, d1, d2, d3 := dst[v*nt:(v+1)*nt], dst[(v+1)*nt:(v+2)*nt], dst[(v+2)*nt:(v+3)*nt], dst[(v+3)*nt:(v+4)*nt]
	for i := rb; i < re; i++ {
		k0, k1 := w.RowStart[i], w.RowStart[i+1]
		cols := w.ColIndex[k0:k1]
		vals := w.Values[k0:k1]
		vals = vals[:len(cols)]
		var s0, s1, s2, s3 float64
		for k, c := range cols {
			wk := vals[k]
			s0 += wk * x0[c]
			s1 += wk * x1[c]
			s2 += wk * x2[c]
			s3 += wk * x3[c]
		}
		if add {
			d0[i] += s0
			d1[i] += s1
			d2[i] += s2
			d3[i] += s3
		} else {
			d0[i], d1[i], d2[i], d3[i] = s0, s1, s2, s3
		}
	}
}

// levelsTo applies the vertical matrix v (target levels × source levels) to nrec
// records of ncol columns in NetCDF order: src[(r*v.Cols+s)*ncol + c] is level s of
// column c in record r, dst likewise with v.Rows levels. Level t of a record is
// Σ_s v_ts · (level s), summed in storage order from zero (bit for bit the per-column
// CSR product). Columns are split over workers goroutines.
func levelsTo(dst, src []float64, v *weights.CSR, ncol, nrec, workers int) {
	if len(src) != nrec*v.Cols*ncol || len(dst) != nrec*v.Rows*ncol {
		panic(fmt.Sprintf("remap: levelsTo: dst %d, src %d for %d records of %d columns and a %d × %d vertical map", len(dst), len(src), nrec, ncol, v.Rows, v.Cols))
	}
	par.For(ncol, workers, 4096, func(lo, hi int) {
		for r := 0; r < nrec; r++ {
			sb := src[r*v.Cols*ncol : (r+1)*v.Cols*ncol]
			db := dst[r*v.Rows*ncol : (r+1)*v.Rows*ncol]
			for t := 0; t < v.Rows; t++ {
				d := db[t*ncol+lo : t*ncol+hi]
				clear(d)
				for k := v.RowStart[t]; k < v.RowStart[t+1]; k++ {
					w := v.Values[k]
					x := sb[int(v.ColIndex[k])*ncol+lo : int(v.ColIndex[k])*ncol+hi]
					x = x[:len(d)]
					for c, xc := range x {
						d[c] += w * xc
					}
				}
			}
		}
	})
}

// transposeTo sets dst (cols × rows) to the transpose of src (rows × cols), in tiles
// of 32 × 32 split over workers goroutines.
func transposeTo(dst, src []float64, rows, cols, workers int) {
	if len(src) != rows*cols || len(dst) != rows*cols {
		panic("remap: transposeTo: length mismatch")
	}
	const tile = 32
	par.For((cols+tile-1)/tile, workers, 16, func(lo, hi int) {
		for bj := lo * tile; bj < min(hi*tile, cols); bj += tile {
			je := min(bj+tile, cols)
			for bi := 0; bi < rows; bi += tile {
				ie := min(bi+tile, rows)
				for j := bj; j < je; j++ {
					d := dst[j*rows+bi : j*rows+ie]
					for i := range d {
						d[i] = src[(bi+i)*cols+j]
					}
				}
			}
		}
	})
}

// rowBoundsTo sets lo[v*nt+i] and hi[v*nt+i] to the smallest and largest of the source
// values src[v*ns+j] that row i of w reads (the entries it stores), for n vectors in
// NetCDF order: the local bounds of clip-and-assured-sum. Empty rows get +Inf and −Inf.
func rowBoundsTo(lo, hi, src []float64, w *weights.CSR, n, workers int) {
	ns, nt := w.Cols, w.Rows
	if len(src) != n*ns || len(lo) != n*nt || len(hi) != n*nt {
		panic("remap: rowBoundsTo: length mismatch")
	}
	par.For(nt, workers, 4*rowBlock, func(a, b int) {
		for rb := a; rb < b; rb += rowBlock {
			re := min(rb+rowBlock, b)
			for v := 0; v < n; v++ {
				x := src[v*ns : (v+1)*ns]
				l, h := lo[v*nt:(v+1)*nt], hi[v*nt:(v+1)*nt]
				for i := rb; i < re; i++ {
					mn, mx := inf, -inf
					for _, c := range w.ColIndex[w.RowStart[i]:w.RowStart[i+1]] {
						mn = min(mn, x[c])
						mx = max(mx, x[c])
					}
					l[i], h[i] = mn, mx
				}
			}
		}
	})
}

// spreadMaskTo sets out[v*nt+i] to whether row i of w reads a source j with
// in[v*ns+j] set, for n vectors in NetCDF order (a missing source spoils exactly the
// targets whose rows use it). It returns the number of entries set.
func spreadMaskTo(out, in []bool, w *weights.CSR, n, workers int) int {
	ns, nt := w.Cols, w.Rows
	counts := make([]int, n)
	par.For(n, workers, 1, func(a, b int) {
		for v := a; v < b; v++ {
			x := in[v*ns : (v+1)*ns]
			o := out[v*nt : (v+1)*nt]
			cnt := 0
			for i := 0; i < nt; i++ {
				bad := false
				for _, c := range w.ColIndex[w.RowStart[i]:w.RowStart[i+1]] {
					if x[c] {
						bad = true
						break
					}
				}
				o[i] = bad
				if bad {
					cnt++
				}
			}
			counts[v] = cnt
		}
	})
	total := 0
	for _, c := range counts {
		total += c
	}
	return total
}

// spreadLevelsMaskTo is spreadMaskTo for a vertical matrix in the layout of levelsTo.
func spreadLevelsMaskTo(out, in []bool, v *weights.CSR, ncol, nrec int) {
	for r := 0; r < nrec; r++ {
		sb := in[r*v.Cols*ncol : (r+1)*v.Cols*ncol]
		db := out[r*v.Rows*ncol : (r+1)*v.Rows*ncol]
		for t := 0; t < v.Rows; t++ {
			d := db[t*ncol : (t+1)*ncol]
			clear(d)
			for k := v.RowStart[t]; k < v.RowStart[t+1]; k++ {
				x := sb[int(v.ColIndex[k])*ncol : int(v.ColIndex[k]+1)*ncol]
				for c, m := range x {
					d[c] = d[c] || m
				}
			}
		}
	}
}
