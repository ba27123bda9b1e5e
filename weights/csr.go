package weights

import (
	"fmt"
	"math"
	"slices"

	"github.com/colbridge/colbridge/internal/par"
)

// CSR is a sparse matrix in compressed sparse row form: row i holds the entries
// k = RowStart[i] .. RowStart[i+1]−1 with column ColIndex[k] and value Values[k].
// Column indices within a row are strictly increasing (no duplicates) for matrices made
// by FromTriplets and everything derived from them.
//
// Rows are targets and columns are sources: dst = W·src.
type CSR struct {
	Rows, Cols int
	RowStart   []int64
	ColIndex   []int32
	Values     []float64
}

// NNZ returns the number of stored entries.
func (w *CSR) NNZ() int { return len(w.Values) }

// Check reports whether the arrays describe a valid matrix: monotone row offsets that span
// the entries, column indices in range and increasing within each row, finite values.
func (w *CSR) Check() error {
	if w.Rows < 0 || w.Cols < 0 {
		return fmt.Errorf("matrix: negative size %d × %d", w.Rows, w.Cols)
	}
	if len(w.RowStart) != w.Rows+1 {
		return fmt.Errorf("matrix: %d row offsets for %d rows", len(w.RowStart), w.Rows)
	}
	if len(w.ColIndex) != len(w.Values) {
		return fmt.Errorf("matrix: %d column indices but %d values", len(w.ColIndex), len(w.Values))
	}
	if w.RowStart[0] != 0 || w.RowStart[w.Rows] != int64(len(w.Values)) {
		return fmt.Errorf("matrix: row offsets run from %d to %d, want 0 to %d", w.RowStart[0], w.RowStart[w.Rows], len(w.Values))
	}
	for i := 0; i < w.Rows; i++ {
		lo, hi := w.RowStart[i], w.RowStart[i+1]
		if hi < lo {
			return fmt.Errorf("matrix: row %d has negative length", i)
		}
		prev := int32(-1)
		for k := lo; k < hi; k++ {
			j := w.ColIndex[k]
			if j < 0 || int(j) >= w.Cols {
				return fmt.Errorf("matrix: row %d: column %d out of range [0, %d)", i, j, w.Cols)
			}
			if j <= prev {
				return fmt.Errorf("matrix: row %d: columns not strictly increasing (%d after %d)", i, j, prev)
			}
			prev = j
			if v := w.Values[k]; math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("matrix: row %d column %d: non-finite weight %v", i, j, v)
			}
		}
	}
	return nil
}

// Triplet is one matrix entry.
type Triplet struct {
	Row, Col int32
	Value    float64
}

// FromTriplets returns the rows × cols matrix with the given entries, sorted by row and
// column; entries with the same row and column are summed in input order, so the result
// is deterministic. It runs in O(n + Σ r log r) (a counting sort by row, then each row of
// length r by column). ts is not modified. It panics if an index is out of range.
func FromTriplets(rows, cols int, ts []Triplet) *CSR {
	count := make([]int64, rows+1)
	for _, t := range ts {
		if t.Row < 0 || int(t.Row) >= rows || t.Col < 0 || int(t.Col) >= cols {
			panic(fmt.Sprintf("weights: FromTriplets: entry (%d, %d) outside %d × %d", t.Row, t.Col, rows, cols))
		}
		count[t.Row+1]++
	}
	for i := 0; i < rows; i++ {
		count[i+1] += count[i]
	}
	// Stable counting sort by row.
	byRow := make([]Triplet, len(ts))
	next := make([]int64, rows)
	copy(next, count[:rows])
	for _, t := range ts {
		byRow[next[t.Row]] = t
		next[t.Row]++
	}
	w := &CSR{Rows: rows, Cols: cols, RowStart: make([]int64, rows+1)}
	w.ColIndex = make([]int32, 0, len(ts))
	w.Values = make([]float64, 0, len(ts))
	for i := 0; i < rows; i++ {
		row := byRow[count[i]:count[i+1]]
		slices.SortStableFunc(row, func(a, b Triplet) int { return int(a.Col) - int(b.Col) })
		for k := 0; k < len(row); {
			v := row[k].Value
			j := k + 1
			for ; j < len(row) && row[j].Col == row[k].Col; j++ {
				v += row[j].Value
			}
			w.ColIndex = append(w.ColIndex, row[k].Col)
			w.Values = append(w.Values, v)
			k = j
		}
		w.RowStart[i+1] = int64(len(w.Values))
	}
	return w
}

// FromRows assembles a matrix from per-row column and value lists (each row's columns
// must be strictly increasing). It is the fast path for builders that produce rows in
// parallel.
func FromRows(rows, cols int, colIdx [][]int32, vals [][]float64) *CSR {
	if len(colIdx) != rows || len(vals) != rows {
		panic("weights: FromRows: need one column list and one value list per row")
	}
	w := &CSR{Rows: rows, Cols: cols, RowStart: make([]int64, rows+1)}
	n := 0
	for i := range colIdx {
		if len(colIdx[i]) != len(vals[i]) {
			panic("weights: FromRows: row lengths differ")
		}
		n += len(colIdx[i])
		w.RowStart[i+1] = int64(n)
	}
	w.ColIndex = make([]int32, 0, n)
	w.Values = make([]float64, 0, n)
	for i := range colIdx {
		w.ColIndex = append(w.ColIndex, colIdx[i]...)
		w.Values = append(w.Values, vals[i]...)
	}
	return w
}

// At returns entry (i, j), zero when not stored.
func (w *CSR) At(i, j int) float64 {
	lo, hi := w.RowStart[i], w.RowStart[i+1]
	k, ok := slices.BinarySearch(w.ColIndex[lo:hi], int32(j))
	if !ok {
		return 0
	}
	return w.Values[lo+int64(k)]
}

// parallelGrain is the number of rows below which ApplyTo runs on one goroutine: under
// about 64k entries the goroutine start-up costs more than it saves (measured in
// BenchmarkApply).
const parallelGrain = 1 << 14

// ApplyTo computes dst = W·src. It panics if len(dst) ≠ Rows or len(src) ≠ Cols. Rows
// are split over GOMAXPROCS goroutines; each row's sum runs in storage order, so the
// result does not depend on the number of goroutines.
func (w *CSR) ApplyTo(dst, src []float64) {
	if len(dst) != w.Rows || len(src) != w.Cols {
		panic(fmt.Sprintf("weights: ApplyTo: dst %d, src %d for a %d × %d matrix", len(dst), len(src), w.Rows, w.Cols))
	}
	par.For(w.Rows, 0, parallelGrain, func(lo, hi int) {
		for i := lo; i < hi; i++ {
			s := 0.0
			for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
				s += w.Values[k] * src[w.ColIndex[k]]
			}
			dst[i] = s
		}
	})
}

// ApplyBatchTo applies W to n vectors at once, reading the index arrays once. The vectors
// are interleaved: src[j*n + v] is entry j of vector v, and likewise
// dst[i*n + v]. It panics on length mismatch.
func (w *CSR) ApplyBatchTo(dst, src []float64, n int) {
	if n < 1 || len(dst) != w.Rows*n || len(src) != w.Cols*n {
		panic(fmt.Sprintf("weights: ApplyBatchTo: dst %d, src %d for %d vectors and a %d × %d matrix", len(dst), len(src), n, w.Rows, w.Cols))
	}
	if n == 1 {
		w.ApplyTo(dst, src)
		return
	}
	par.For(w.Rows, 0, max(parallelGrain/n, 64), func(lo, hi int) {
		for i := lo; i < hi; i++ {
			d := dst[i*n : i*n+n]
			clear(d)
			for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
				wk := w.Values[k]
				j := int(w.ColIndex[k]) * n
				s := src[j : j+n]
				for v := range d {
					d[v] += wk * s[v]
				}
			}
		}
	})
}

// T returns the transpose as a new matrix (rows of the result are sorted by column).
func (w *CSR) T() *CSR {
	t := &CSR{Rows: w.Cols, Cols: w.Rows, RowStart: make([]int64, w.Cols+1)}
	for _, j := range w.ColIndex {
		t.RowStart[j+1]++
	}
	for j := 0; j < w.Cols; j++ {
		t.RowStart[j+1] += t.RowStart[j]
	}
	t.ColIndex = make([]int32, len(w.ColIndex))
	t.Values = make([]float64, len(w.Values))
	next := make([]int64, w.Cols)
	copy(next, t.RowStart[:w.Cols])
	for i := 0; i < w.Rows; i++ {
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			j := w.ColIndex[k]
			p := next[j]
			t.ColIndex[p] = int32(i)
			t.Values[p] = w.Values[k]
			next[j]++
		}
	}
	return t
}

// ScaleRows multiplies row i by r[i] and column j by c[j] in place: W ← diag(r)·W·diag(c).
// A nil r or c means ones. It panics on length mismatch.
func (w *CSR) ScaleRows(r, c []float64) {
	if (r != nil && len(r) != w.Rows) || (c != nil && len(c) != w.Cols) {
		panic("weights: ScaleRows: scale lengths do not match the matrix")
	}
	for i := 0; i < w.Rows; i++ {
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			if r != nil {
				w.Values[k] *= r[i]
			}
			if c != nil {
				w.Values[k] *= c[w.ColIndex[k]]
			}
		}
	}
}

// Clone returns a deep copy.
func (w *CSR) Clone() *CSR {
	return &CSR{Rows: w.Rows, Cols: w.Cols,
		RowStart: slices.Clone(w.RowStart), ColIndex: slices.Clone(w.ColIndex), Values: slices.Clone(w.Values)}
}

// Mul returns the product a·b (a.Cols must equal b.Rows; it panics otherwise). Row i of
// the product is accumulated in a dense scratch row, then compacted in column order.
func Mul(a, b *CSR) *CSR {
	if a.Cols != b.Rows {
		panic(fmt.Sprintf("weights: Mul: %d × %d times %d × %d", a.Rows, a.Cols, b.Rows, b.Cols))
	}
	cols := make([][]int32, a.Rows)
	vals := make([][]float64, a.Rows)
	par.For(a.Rows, 0, 1024, func(lo, hi int) {
		acc := make([]float64, b.Cols)
		mark := make([]bool, b.Cols)
		var touched []int32
		for i := lo; i < hi; i++ {
			touched = touched[:0]
			for k := a.RowStart[i]; k < a.RowStart[i+1]; k++ {
				av := a.Values[k]
				r := a.ColIndex[k]
				for l := b.RowStart[r]; l < b.RowStart[r+1]; l++ {
					j := b.ColIndex[l]
					if !mark[j] {
						mark[j] = true
						touched = append(touched, j)
					}
					acc[j] += av * b.Values[l]
				}
			}
			slices.Sort(touched)
			ci := make([]int32, len(touched))
			vi := make([]float64, len(touched))
			for n, j := range touched {
				ci[n], vi[n] = j, acc[j]
				acc[j], mark[j] = 0, false
			}
			cols[i], vals[i] = ci, vi
		}
	})
	return FromRows(a.Rows, b.Cols, cols, vals)
}
