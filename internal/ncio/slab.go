package ncio

import (
	"fmt"
	"math"
)

// shape describes a variable's dimensions for bounds checks: names,
// current lengths and which one (if any) may grow on writing.
type shape struct {
	dims      []string
	lens      []int
	unlimited []bool
}

// resolve checks start and count against the shape and returns them with
// nil replaced (start nil: all zeros; count nil: to the end of each
// dimension from start) and the number of values n. When growing is set,
// an unlimited dimension accepts any start and count (writes extend it).
// The returned error is a problem description for an *Error.
func (s shape) resolve(start, count []int, growing bool) (st, ct []int, n int, kind error, msg string) {
	r := len(s.lens)
	if start != nil && len(start) != r {
		return nil, nil, 0, ErrBounds, fmt.Sprintf("start has %d entries, variable has %d dimensions", len(start), r)
	}
	if count != nil && len(count) != r {
		return nil, nil, 0, ErrBounds, fmt.Sprintf("count has %d entries, variable has %d dimensions", len(count), r)
	}
	st = make([]int, r)
	ct = make([]int, r)
	copy(st, start)
	n = 1
	for i := range r {
		if st[i] < 0 {
			return nil, nil, 0, ErrBounds, fmt.Sprintf("negative start %d in dimension %q", st[i], s.dims[i])
		}
		grow := growing && s.unlimited[i]
		if count != nil {
			ct[i] = count[i]
			if ct[i] < 0 {
				return nil, nil, 0, ErrBounds, fmt.Sprintf("negative count %d in dimension %q", ct[i], s.dims[i])
			}
		} else {
			ct[i] = max(s.lens[i]-st[i], 0)
		}
		if !grow && (st[i] > s.lens[i] || ct[i] > s.lens[i]-st[i]) {
			return nil, nil, 0, ErrBounds, fmt.Sprintf("start+count exceeds dimension %q (length %d)", s.dims[i], s.lens[i])
		}
		if grow && st[i] > math.MaxInt32-ct[i] {
			// The C library stores lengths as size_t, but no real file comes near this.
			return nil, nil, 0, ErrBounds, fmt.Sprintf("start+count too large for dimension %q", s.dims[i])
		}
		if ct[i] != 0 && n > math.MaxInt/ct[i] {
			return nil, nil, 0, ErrBounds, "start/count describe more values than an int can count"
		}
		n *= ct[i]
	}
	return st, ct, n, nil, ""
}

// blocks splits the hyperslab (start, count) into row-major pieces of at
// most maxN values each, every piece a hyperslab itself and contiguous in
// the row-major order of the whole, and calls fn for them in order with
// the offset of the piece. fn may keep neither slice. n is the total.
func blocks(start, count []int, n, maxN int, fn func(bs, bc []int, off, m int) error) error {
	if n == 0 {
		return nil
	}
	r := len(count)
	if n <= maxN || r == 0 {
		return fn(start, count, 0, n)
	}
	// Find the outermost dimension k whose inner block (dims after k) fits.
	inner := 1 // product of count[k+1:]
	k := r - 1
	for k > 0 && count[k] <= maxN/inner {
		inner *= count[k]
		k--
	}
	step := max(1, maxN/inner) // how many indices of dimension k per piece
	bs := make([]int, r)
	bc := make([]int, r)
	copy(bs, start)
	copy(bc, count)
	for i := range k {
		bc[i] = 1
	}
	idx := make([]int, k) // odometer over dimensions 0..k-1
	off := 0
	for {
		for i := range k {
			bs[i] = start[i] + idx[i]
		}
		for j := 0; j < count[k]; j += step {
			bs[k] = start[k] + j
			bc[k] = min(step, count[k]-j)
			m := bc[k] * inner
			if err := fn(bs, bc, off, m); err != nil {
				return err
			}
			off += m
		}
		i := k - 1
		for ; i >= 0; i-- {
			idx[i]++
			if idx[i] < count[i] {
				break
			}
			idx[i] = 0
		}
		if i < 0 {
			return nil
		}
	}
}
