package conserve

import (
	"fmt"

	"github.com/colbridge/colbridge/weights"
)

// chain is a product of sparse matrices applied without forming it:
// chain{A, B, C} maps x to A·(B·(C·x)).
type chain []*weights.CSR

// dims returns the rows of the first factor and the columns of the last.
func (c chain) dims() (int, int) { return c[0].Rows, c[len(c)-1].Cols }

// applyBatch applies the chain to n interleaved vectors (see weights.CSR.ApplyBatchTo).
func (c chain) applyBatch(dst, src []float64, n int) {
	r, k := c.dims()
	if len(dst) != r*n || len(src) != k*n {
		panic(fmt.Sprintf("conserve: chain: dst %d, src %d for %d vectors and a %d × %d product", len(dst), len(src), n, r, k))
	}
	x := src
	for i := len(c) - 1; i >= 0; i-- {
		var y []float64
		if i == 0 {
			y = dst
		} else {
			y = make([]float64, c[i].Rows*n)
		}
		c[i].ApplyBatchTo(y, x, n)
		x = y
	}
}

// apply applies the chain to one vector.
func (c chain) apply(dst, src []float64) { c.applyBatch(dst, src, 1) }

// applyComplex applies the chain to complex vectors: us[v] are the inputs (length cols),
// ys[v] receive the outputs (length rows). Real and imaginary parts travel as two
// interleaved real vectors, so the index arrays are read once for the whole batch.
func (c chain) applyComplex(ys, us [][]complex128) {
	r, k := c.dims()
	nv := len(us)
	n := 2 * nv
	src := make([]float64, k*n)
	for v, u := range us {
		for j, z := range u {
			src[j*n+2*v] = real(z)
			src[j*n+2*v+1] = imag(z)
		}
	}
	dst := make([]float64, r*n)
	c.applyBatch(dst, src, n)
	for v := range ys {
		y := ys[v]
		for i := range y {
			y[i] = complex(dst[i*n+2*v], dst[i*n+2*v+1])
		}
	}
}
