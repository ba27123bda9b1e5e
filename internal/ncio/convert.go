package ncio

import (
	"fmt"
	"math"
	"strconv"
	"unsafe"
)

// Conversion rules, the same for reading and writing:
//
//   - to a floating type: any number converts, rounding to nearest
//     (IEEE 754); a finite value beyond the float32 range is an error
//     rather than a silent infinity. NaN and ±Inf pass through.
//   - to an integer type: the value must be integral and in range (so
//     NaN, 0.5 or 300 into a byte are errors, never truncated or wrapped).

type number interface {
	int8 | uint8 | int16 | uint16 | int32 | uint32 | int64 | uint64 | float32 | float64
}

// convert copies src into dst (same length) and returns the index of the
// first value that does not convert under the rules above, or -1. On a
// failure dst is partly written.
func convert[D, S number](dst []D, src []S) int {
	dst = dst[:len(src)]
	switch any(D(0)).(type) {
	case float64:
		for i, s := range src {
			dst[i] = D(s)
		}
		return -1
	case float32:
		for i, s := range src {
			d := D(s)
			if f := float64(d); (f > math.MaxFloat32 || f < -math.MaxFloat32) && !isInf(s) {
				return i
			}
			dst[i] = d
		}
		return -1
	}
	lo, hi := intRange[D]()
	switch any(S(0)).(type) {
	case float32, float64:
		for i, s := range src {
			f := float64(s)
			// NaN fails both comparisons; hi is exclusive and exact (a power of two).
			if !(f >= lo && f < hi) || f != math.Trunc(f) {
				return i
			}
			dst[i] = D(s)
		}
	default:
		// Integer to integer: conversion is exact iff it round-trips and keeps its sign.
		for i, s := range src {
			d := D(s)
			if S(d) != s || (d < 0) != (s < 0) {
				return i
			}
			dst[i] = d
		}
	}
	return -1
}

func isInf[S number](s S) bool {
	f := float64(s)
	return f > math.MaxFloat64 || f < -math.MaxFloat64
}

// intRange returns the range of the integer type D as [lo, hi), both
// exactly representable as float64.
func intRange[D number]() (lo, hi float64) {
	switch any(D(0)).(type) {
	case int8:
		return -1 << 7, 1 << 7
	case uint8:
		return 0, 1 << 8
	case int16:
		return -1 << 15, 1 << 15
	case uint16:
		return 0, 1 << 16
	case int32:
		return -1 << 31, 1 << 31
	case uint32:
		return 0, 1 << 32
	case int64:
		return -1 << 63, 1 << 63
	case uint64:
		return 0, 1 << 64
	}
	panic("ncio: intRange of a non-integer type")
}

// view returns n values of type T stored at p.
func view[T number](p unsafe.Pointer, n int) []T {
	return unsafe.Slice((*T)(p), n)
}

// fromStored converts n values of the stored type t at p into dst.
// It returns the index of the first failure (-1 if none) and false if t
// is not numeric.
func fromStored[D number](dst []D, t Type, p unsafe.Pointer, n int) (bad int, ok bool) {
	if n == 0 {
		return -1, t.IsNumeric()
	}
	switch t {
	case Int8:
		return convert(dst, view[int8](p, n)), true
	case Uint8:
		return convert(dst, view[uint8](p, n)), true
	case Int16:
		return convert(dst, view[int16](p, n)), true
	case Uint16:
		return convert(dst, view[uint16](p, n)), true
	case Int32:
		return convert(dst, view[int32](p, n)), true
	case Uint32:
		return convert(dst, view[uint32](p, n)), true
	case Int64:
		return convert(dst, view[int64](p, n)), true
	case Uint64:
		return convert(dst, view[uint64](p, n)), true
	case Float32:
		return convert(dst, view[float32](p, n)), true
	case Float64:
		return convert(dst, view[float64](p, n)), true
	}
	return -1, false
}

// toStored converts src into len(src) values of the stored type t at p.
func toStored[S number](t Type, p unsafe.Pointer, src []S) (bad int, ok bool) {
	n := len(src)
	if n == 0 {
		return -1, t.IsNumeric()
	}
	switch t {
	case Int8:
		return convert(view[int8](p, n), src), true
	case Uint8:
		return convert(view[uint8](p, n), src), true
	case Int16:
		return convert(view[int16](p, n), src), true
	case Uint16:
		return convert(view[uint16](p, n), src), true
	case Int32:
		return convert(view[int32](p, n), src), true
	case Uint32:
		return convert(view[uint32](p, n), src), true
	case Int64:
		return convert(view[int64](p, n), src), true
	case Uint64:
		return convert(view[uint64](p, n), src), true
	case Float32:
		return convert(view[float32](p, n), src), true
	case Float64:
		return convert(view[float64](p, n), src), true
	}
	return -1, false
}

// typeOf returns the NetCDF type that has the same memory layout as T.
func typeOf[T number]() Type {
	switch any(T(0)).(type) {
	case int8:
		return Int8
	case uint8:
		return Uint8
	case int16:
		return Int16
	case uint16:
		return Uint16
	case int32:
		return Int32
	case uint32:
		return Uint32
	case int64:
		return Int64
	case uint64:
		return Uint64
	case float32:
		return Float32
	case float64:
		return Float64
	}
	return 0
}

// storedString formats value i of stored type t at p exactly.
func storedString(t Type, p unsafe.Pointer, i int) string {
	switch t {
	case Int8:
		return strconv.FormatInt(int64(view[int8](p, i+1)[i]), 10)
	case Uint8:
		return strconv.FormatUint(uint64(view[uint8](p, i+1)[i]), 10)
	case Int16:
		return strconv.FormatInt(int64(view[int16](p, i+1)[i]), 10)
	case Uint16:
		return strconv.FormatUint(uint64(view[uint16](p, i+1)[i]), 10)
	case Int32:
		return strconv.FormatInt(int64(view[int32](p, i+1)[i]), 10)
	case Uint32:
		return strconv.FormatUint(uint64(view[uint32](p, i+1)[i]), 10)
	case Int64:
		return strconv.FormatInt(view[int64](p, i+1)[i], 10)
	case Uint64:
		return strconv.FormatUint(view[uint64](p, i+1)[i], 10)
	case Float32:
		return strconv.FormatFloat(float64(view[float32](p, i+1)[i]), 'g', -1, 32)
	case Float64:
		return strconv.FormatFloat(view[float64](p, i+1)[i], 'g', -1, 64)
	}
	return "?"
}

// valueString formats a Go number exactly.
func valueString[T number](x T) string {
	switch v := any(x).(type) {
	case float32:
		return strconv.FormatFloat(float64(v), 'g', -1, 32)
	case float64:
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return fmt.Sprint(x)
}
