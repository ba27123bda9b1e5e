package weights

// Accumulator is a Neumaier (improved Kahan–Babuška) compensated sum: the error of the sum
// stays about one rounding of the result, independent of the number of terms (Higham,
// Accuracy and Stability of Numerical Algorithms, §4.3). The zero value is an empty sum.
type Accumulator struct{ s, c float64 }

// Add adds x to the sum.
func (k *Accumulator) Add(x float64) {
	t := k.s + x
	if abs(k.s) >= abs(x) {
		k.c += (k.s - t) + x
	} else {
		k.c += (x - t) + k.s
	}
	k.s = t
}

// Sum returns the compensated sum so far.
func (k *Accumulator) Sum() float64 { return k.s + k.c }

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
		var k Accumulator
		for p := w.RowStart[i]; p < w.RowStart[i+1]; p++ {
			k.Add(w.Values[p])
		}
		dst[i] = k.Sum()
	}
}

// ColSumsTo sets dst[j] = Σ_i r_i W_ij with compensated summation; r nil means ones. With r
// the target measures and the result divided by the source measures this is the
// conservation check c_s of DESIGN.md §5. It panics on length mismatch.
func (w *CSR) ColSumsTo(dst, r []float64) {
	if len(dst) != w.Cols || (r != nil && len(r) != w.Rows) {
		panic("weights: ColSumsTo: wrong length")
	}
	acc := make([]Accumulator, w.Cols)
	for i := 0; i < w.Rows; i++ {
		ri := 1.0
		if r != nil {
			ri = r[i]
		}
		for p := w.RowStart[i]; p < w.RowStart[i+1]; p++ {
			acc[w.ColIndex[p]].Add(ri * w.Values[p])
		}
	}
	for j := range dst {
		dst[j] = acc[j].Sum()
	}
}

// Sum returns the compensated sum of xs.
func Sum(xs []float64) float64 {
	var k Accumulator
	for _, x := range xs {
		k.Add(x)
	}
	return k.Sum()
}

// Dot returns the compensated sum of a[i]·b[i]. It panics if the lengths differ.
func Dot(a, b []float64) float64 {
	if len(a) != len(b) {
		panic("weights: Dot: lengths differ")
	}
	var k Accumulator
	for i := range a {
		k.Add(a[i] * b[i])
	}
	return k.Sum()
}
