package ncio

import (
	"fmt"
	"unsafe"
)

// WriteFloat64s writes src as the hyperslab (start, count) of variable
// varName, converting to the stored type: to Float32 rounding to nearest
// (a finite value beyond the float32 range gives ErrRange), to integer
// types only exactly (NaN, 0.5 or 300 into Uint8 give ErrRange). start nil
// means all zeros, count nil up to the end of each dimension. Along an
// unlimited dimension start+count may exceed the current length: the
// write appends records. The Writer must be in data mode (EndDef). It
// panics if len(src) is not the number of values in the hyperslab.
func (w *Writer) WriteFloat64s(varName string, start, count []int, src []float64) error {
	return writeFrom(w, varName, start, count, src)
}

// WriteFloat32s is WriteFloat64s for float32 sources.
func (w *Writer) WriteFloat32s(varName string, start, count []int, src []float32) error {
	return writeFrom(w, varName, start, count, src)
}

// WriteInt32s is WriteFloat64s for int32 sources.
func (w *Writer) WriteInt32s(varName string, start, count []int, src []int32) error {
	return writeFrom(w, varName, start, count, src)
}

// WriteInt64s is WriteFloat64s for int64 sources (values beyond 2^53
// written to Float64 round to nearest).
func (w *Writer) WriteInt64s(varName string, start, count []int, src []int64) error {
	return writeFrom(w, varName, start, count, src)
}

func writeFrom[T number](w *Writer, varName string, start, count []int, src []T) error {
	return w.do("write", varName, false, func() error {
		fail := func(kind error, msg string, cause error) error {
			return w.errorf("write", varName, "", kind, msg, cause)
		}
		v, _, err := w.variable("write", varName, false)
		if err != nil {
			return err
		}
		shp := shape{
			dims:      make([]string, len(v.dims)),
			lens:      make([]int, len(v.dims)),
			unlimited: make([]bool, len(v.dims)),
		}
		for i, k := range v.dims {
			shp.dims[i], shp.lens[i], shp.unlimited[i] = w.dims[k].name, w.dims[k].len, w.dims[k].unlimited
		}
		st, ct, n, kind, msg := shp.resolve(start, count, true)
		if kind != nil {
			return fail(kind, msg, nil)
		}
		if count == nil && n == 0 && len(src) > 0 {
			return fail(ErrBounds, "count is needed along an unlimited dimension", nil)
		}
		if len(src) != n {
			panic(fmt.Sprintf("ncio: write %s: variable %q: len(src) = %d, the hyperslab has %d values", w.path, varName, len(src), n))
		}
		w.writes++
		if w.failAt > 0 && w.writes >= w.failAt {
			return fail(ErrInjected, fmt.Sprintf("write call %d failed on purpose (InjectWriteFault)", w.writes), nil)
		}
		if n == 0 {
			return nil
		}
		if v.typ == typeOf[T]() {
			if err := putVara(w.ncid, v.id, st, ct, unsafe.Pointer(&src[0])); err != nil {
				return fail(nil, "", err)
			}
		} else {
			buf := unsafe.Pointer(&scratch[0])
			err := blocks(st, ct, n, scratchBytes/v.typ.size(), func(bs, bc []int, off, m int) error {
				if bad, _ := toStored(v.typ, buf, src[off:off+m]); bad >= 0 {
					return fail(ErrRange, fmt.Sprintf("value %s at %s does not fit %s",
						valueString(src[off+bad]), indexString(shp.dims, st, ct, off+bad), v.typ), nil)
				}
				if err := putVara(w.ncid, v.id, bs, bc, buf); err != nil {
					return fail(nil, "", err)
				}
				return nil
			})
			if err != nil {
				return err
			}
		}
		for i, k := range v.dims {
			if d := &w.dims[k]; d.unlimited {
				d.len = max(d.len, st[i]+ct[i])
			}
		}
		return nil
	})
}
