package weights

import (
	"fmt"

	"github.com/colbridge/colbridge/internal/ncio"
)

// TripletNames names the variables of a foreign matrix stored as triplets in a NetCDF file.
type TripletNames struct {
	Row, Col, Value string
	// OneBased says the indices count from 1 (as Fortran writes them).
	OneBased bool
}

// ReadTriplets reads a matrix stored as three equally long 1-D variables (row index,
// column index, value) in a NetCDF file written by any coupler, for an audit. rows and
// cols give the size when known (from the meshes); 0 means the largest index seen.
// Duplicate entries are summed. Errors name the file and the variable.
func ReadTriplets(path string, n TripletNames, rows, cols int) (*CSR, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var length int
	read := func(name string) ([]int64, error) {
		v, err := f.Var(name)
		if err != nil {
			return nil, fmt.Errorf("%s: variable %q: %w", path, name, err)
		}
		if len(v.Shape) != 1 {
			return nil, fmt.Errorf("%s: variable %q has %d dimensions, want 1", path, name, len(v.Shape))
		}
		if length == 0 {
			length = v.Shape[0]
		} else if v.Shape[0] != length {
			return nil, fmt.Errorf("%s: variable %q has %d values, the others %d", path, name, v.Shape[0], length)
		}
		out := make([]int64, length)
		if err := f.ReadInt64s(name, nil, nil, out); err != nil {
			return nil, err
		}
		return out, nil
	}
	ri, err := read(n.Row)
	if err != nil {
		return nil, err
	}
	ci, err := read(n.Col)
	if err != nil {
		return nil, err
	}
	vals := make([]float64, length)
	if v, err := f.Var(n.Value); err != nil || len(v.Shape) != 1 || v.Shape[0] != length {
		return nil, fmt.Errorf("%s: variable %q: want %d values (%v)", path, n.Value, length, err)
	}
	if err := f.ReadFloat64s(n.Value, nil, nil, vals); err != nil {
		return nil, err
	}
	base := int64(0)
	if n.OneBased {
		base = 1
	}
	maxR, maxC := int64(-1), int64(-1)
	ts := make([]Triplet, length)
	for k := range ts {
		r, c := ri[k]-base, ci[k]-base
		if r < 0 || c < 0 || (rows > 0 && r >= int64(rows)) || (cols > 0 && c >= int64(cols)) || r > 1<<31-2 || c > 1<<31-2 {
			return nil, fmt.Errorf("%s: entry %d: index (%d, %d) outside the matrix (%s, %s; %d × %d)", path, k, ri[k], ci[k], n.Row, n.Col, rows, cols)
		}
		maxR, maxC = max(maxR, r), max(maxC, c)
		ts[k] = Triplet{Row: int32(r), Col: int32(c), Value: vals[k]}
	}
	if rows == 0 {
		rows = int(maxR + 1)
	}
	if cols == 0 {
		cols = int(maxC + 1)
	}
	w := FromTriplets(rows, cols, ts)
	if err := w.Check(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return w, nil
}
