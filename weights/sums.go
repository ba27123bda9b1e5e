package weights

// kahan is a Neumaier (improved Kahan–Babuška) accumulator: the error of the sum stays
// about one rounding of the result, independent of the number of terms.
type kahan struct{ s, c float64 }

func (k *kahan) add(x float64) {
	t := k.s + x
	if abs(k.s) >= abs(x) {
		k.c += (k.s - t) + x
	} else {
		k.c += (x - t) + k.s
	}
	k.s = t
}

func (k *kahan) sum() float64 { return k.s + k.c }

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// RowSumsTo sets dst[i] = Σ_j W_ij with compensated summation (the consistency check: a
// map that preserves constants has row sums 1). It panics if len(dst) ≠ Rows.
func (w *CSR) RowSumsTo(dst []float64) {
	if len(dst) != w.Rows {
		panic("weights: RowSumsTo: wrong length")
	}
	for i := 0; i < w.Rows; i++ {
		var k kahan
		for p := w.RowStart[i]; p < w.RowStart[i+1]; p++ {
			k.add(w.Values[p])
		}
		dst[i] = k.sum()
	}
}

// ColSumsTo sets dst[j] = Σ_i r_i W_ij with compensated summation; r nil means ones. With r
// the target measures and the result divided by the source measures this is the
// conservation check c_s of DESIGN.md §5. It panics on length mismatch.
func (w *CSR) ColSumsTo(dst, r []float64) {
	if len(dst) != w.Cols || (r != nil && len(r) != w.Rows) {
		panic("weights: ColSumsTo: wrong length")
	}
	acc := make([]kahan, w.Cols)
	for i := 0; i < w.Rows; i++ {
		ri := 1.0
		if r != nil {
			ri = r[i]
		}
		for p := w.RowStart[i]; p < w.RowStart[i+1]; p++ {
			acc[w.ColIndex[p]].add(ri * w.Values[p])
		}
	}
	for j := range dst {
		dst[j] = acc[j].sum()
	}
}

// Sum returns the compensated sum of xs.
func Sum(xs []float64) float64 {
	var k kahan
	for _, x := range xs {
		k.add(x)
	}
	return k.sum()
}

// Dot returns the compensated sum of a[i]·b[i]. It panics if the lengths differ.
func Dot(a, b []float64) float64 {
	if len(a) != len(b) {
		panic("weights: Dot: lengths differ")
	}
	var k kahan
	for i := range a {
		k.add(a[i] * b[i])
	}
	return k.sum()
}
