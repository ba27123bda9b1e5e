package ncio

import (
	"fmt"
	"strings"
	"unsafe"
)

// ReadFloat64s reads the hyperslab (start, count) of variable varName
// into dst, converting from whatever numeric type is stored (integers
// beyond 2^53 round to nearest). start nil means all zeros; count nil
// means up to the end of every dimension; both nil read the whole variable.
// Values arrive in C (row-major) order of the hyperslab. Text variables
// give ErrType; start/count outside the shape give ErrBounds before the
// library is called. It panics if len(dst) is not the number of values in
// the hyperslab.
func (f *File) ReadFloat64s(varName string, start, count []int, dst []float64) error {
	return readInto(f, varName, start, count, dst)
}

// ReadFloat32s is ReadFloat64s for float32 destinations. Values round to
// nearest; a finite float64 beyond the float32 range gives ErrRange.
func (f *File) ReadFloat32s(varName string, start, count []int, dst []float32) error {
	return readInto(f, varName, start, count, dst)
}

// ReadInt32s is ReadFloat64s for int32 destinations. Each value must be
// integral and in range, else ErrRange (so a float variable holding
// 9.96921e36 fill values cannot be read as int32).
func (f *File) ReadInt32s(varName string, start, count []int, dst []int32) error {
	return readInto(f, varName, start, count, dst)
}

// ReadInt64s is ReadFloat64s for int64 destinations, with the rules of
// ReadInt32s.
func (f *File) ReadInt64s(varName string, start, count []int, dst []int64) error {
	return readInto(f, varName, start, count, dst)
}

func readInto[T number](f *File, varName string, start, count []int, dst []T) error {
	v, err := f.lookup("read", varName)
	if err != nil {
		return err
	}
	fail := func(kind error, msg string, cause error) error {
		return &Error{Op: "read", Path: f.path, Var: varName, Kind: kind, Msg: msg, Err: cause}
	}
	want := typeOf[T]()
	if !v.Type.IsNumeric() {
		return fail(ErrType, fmt.Sprintf("cannot read %s values as %s", v.Type, want), nil)
	}
	st, ct, n, kind, msg := v.shp.resolve(start, count, false)
	if kind != nil {
		return fail(kind, msg, nil)
	}
	if len(dst) != n {
		panic(fmt.Sprintf("ncio: read %s: variable %q: len(dst) = %d, the hyperslab has %d values", f.path, varName, len(dst), n))
	}
	run(func() {
		if f.closed {
			err = fail(ErrClosed, "", nil)
			return
		}
		if n == 0 {
			return
		}
		if v.Type == want {
			if e := getVara(f.ncid, v.id, st, ct, unsafe.Pointer(&dst[0])); e != nil {
				err = fail(nil, "", e)
			}
			return
		}
		buf := unsafe.Pointer(&scratch[0])
		err = blocks(st, ct, n, scratchBytes/v.Type.size(), func(bs, bc []int, off, m int) error {
			if e := getVara(f.ncid, v.id, bs, bc, buf); e != nil {
				return fail(nil, "", e)
			}
			if bad, _ := fromStored(dst[off:off+m], v.Type, buf, m); bad >= 0 {
				return fail(ErrRange, fmt.Sprintf("value %s at %s does not fit %s",
					storedString(v.Type, buf, bad), indexString(v.Dims, st, ct, off+bad), want), nil)
			}
			return nil
		})
	})
	return err
}

// indexString names element k (row-major) of the hyperslab (start, count)
// by its indices in the variable, e.g. "[nCells=3, nLev=0]".
func indexString(dims []string, start, count []int, k int) string {
	idx := make([]int, len(count))
	for i := len(count) - 1; i >= 0; i-- {
		idx[i] = start[i] + k%count[i]
		k /= count[i]
	}
	parts := make([]string, len(idx))
	for i, x := range idx {
		parts[i] = fmt.Sprintf("%s=%d", dims[i], x)
	}
	return "[" + strings.Join(parts, ", ") + "]"
}
