package ncio

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"testing"
)

// readAll reads a whole variable with each of the four readers and
// returns the results (as float64 for comparison) or the first error.
func readAll(f *File, name string) (map[string][]float64, error) {
	v, err := f.Var(name)
	if err != nil {
		return nil, err
	}
	n := v.Len()
	out := make(map[string][]float64)
	d64 := make([]float64, n)
	if err := f.ReadFloat64s(name, nil, nil, d64); err != nil {
		return nil, err
	}
	out["float64"] = d64
	d32 := make([]float32, n)
	if err := f.ReadFloat32s(name, nil, nil, d32); err != nil {
		return nil, err
	}
	out["float32"] = widen(d32)
	i32 := make([]int32, n)
	if err := f.ReadInt32s(name, nil, nil, i32); err != nil {
		return nil, err
	}
	out["int32"] = widen(i32)
	i64 := make([]int64, n)
	if err := f.ReadInt64s(name, nil, nil, i64); err != nil {
		return nil, err
	}
	out["int64"] = widen(i64)
	return out, nil
}

func widen[T number](x []T) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = float64(v)
	}
	return out
}

// TestRoundTripTypes writes small integers (exact in every NetCDF type)
// through each writer into a variable of each type, in both formats, and
// reads them back through each reader. Every conversion must be exact.
func TestRoundTripTypes(t *testing.T) {
	want := []float64{0, 1, 2, 3, 4, 100}
	writers := []struct {
		name  string
		write func(w *Writer, v string) error
	}{
		{"float64", func(w *Writer, v string) error { return w.WriteFloat64s(v, nil, nil, want) }},
		{"float32", func(w *Writer, v string) error { return w.WriteFloat32s(v, nil, nil, narrow[float32](want)) }},
		{"int32", func(w *Writer, v string) error { return w.WriteInt32s(v, nil, nil, narrow[int32](want)) }},
		{"int64", func(w *Writer, v string) error { return w.WriteInt64s(v, nil, nil, narrow[int64](want)) }},
	}
	for _, format := range []Format{NetCDF4, Classic64} {
		for _, wr := range writers {
			t.Run(fmt.Sprintf("format%d/%s", format, wr.name), func(t *testing.T) {
				p := tempFile(t, "rt.nc")
				w, err := Create(p, CreateOptions{Format: format})
				check(t, err)
				defer w.Abort()
				check(t, w.DefDim("two", 2))
				check(t, w.DefDim("three", 3))
				types := sample{format: format}.types()
				for _, ty := range types {
					check(t, w.DefVar("v_"+ty.String(), ty, []string{"two", "three"}))
				}
				check(t, w.EndDef())
				for _, ty := range types {
					check(t, wr.write(w, "v_"+ty.String()))
				}
				check(t, w.Commit())
				f, err := Open(p)
				check(t, err)
				defer f.Close()
				for _, ty := range types {
					v, err := f.Var("v_" + ty.String())
					check(t, err)
					if v.Type != ty || !slices.Equal(v.Shape, []int{2, 3}) || !slices.Equal(v.Dims, []string{"two", "three"}) {
						t.Errorf("%s: got %+v", ty, v)
					}
					got, err := readAll(f, v.Name)
					check(t, err)
					for reader, g := range got {
						if !slices.Equal(g, want) {
							t.Errorf("%s read as %s: got %v, want %v", ty, reader, g, want)
						}
					}
				}
			})
		}
	}
}

func narrow[T number](x []float64) []T {
	out := make([]T, len(x))
	for i, v := range x {
		out[i] = T(v)
	}
	return out
}

// TestTypeLimits writes the extreme values of each integer type and reads
// them back exactly as int64; one step beyond either end is refused.
// Ranges: NetCDF Users Guide, "Data Types" (byte -128..127, ubyte 0..255,
// short, ushort, int, uint, int64, uint64 as two's complement / unsigned
// of 8, 16, 32, 64 bits).
func TestTypeLimits(t *testing.T) {
	two64, two63 := math.Ldexp(1, 64), math.Ldexp(1, 63)
	cases := []struct {
		t      Type
		lo, hi int64
		beyond []float64 // just outside the range, exact in float64
	}{
		{Int8, math.MinInt8, math.MaxInt8, []float64{-129, 128}},
		{Uint8, 0, math.MaxUint8, []float64{-1, 256}},
		{Int16, math.MinInt16, math.MaxInt16, []float64{-32769, 32768}},
		{Uint16, 0, math.MaxUint16, []float64{-1, 65536}},
		{Int32, math.MinInt32, math.MaxInt32, []float64{-2147483649, 2147483648}},
		{Uint32, 0, math.MaxUint32, []float64{-1, 4294967296}},
		{Int64, math.MinInt64, math.MaxInt64, []float64{-two64, two63}}, // -2^63-1 is not a float64
		{Uint64, 0, math.MaxInt64, []float64{-1, two64}},                // the top half of uint64 is not an int64
	}
	p := tempFile(t, "limits.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("two", 2))
	for _, c := range cases {
		check(t, w.DefVar("v_"+c.t.String(), c.t, []string{"two"}))
	}
	check(t, w.EndDef())
	for _, c := range cases {
		check(t, w.WriteInt64s("v_"+c.t.String(), nil, nil, []int64{c.lo, c.hi}))
	}
	check(t, w.Commit())
	f, err := Open(p)
	check(t, err)
	defer f.Close()
	for _, c := range cases {
		got := make([]int64, 2)
		check(t, f.ReadInt64s("v_"+c.t.String(), nil, nil, got))
		if got[0] != c.lo || got[1] != c.hi {
			t.Errorf("%s: got %v, want [%d %d]", c.t, got, c.lo, c.hi)
		}
	}

	// Just beyond the range, on a fresh writer each (errors are sticky).
	for _, c := range cases {
		for _, x := range c.beyond {
			if err := writeOne(t, c.t, x); !errors.Is(err, ErrRange) {
				t.Errorf("%s: writing %g: got %v, want ErrRange", c.t, x, err)
			}
		}
	}
}

// writeOne writes one float64 into a new one-element variable of type ty
// and returns the write error.
func writeOne(t *testing.T, ty Type, x float64) error {
	t.Helper()
	w, err := Create(tempFile(t, "one.nc"), CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("one", 1))
	check(t, w.DefVar("v", ty, []string{"one"}))
	check(t, w.EndDef())
	return w.WriteFloat64s("v", nil, nil, []float64{x})
}

// TestConversions checks the conversion rules of doc.go on single values.
// Reference for rounding: IEEE 754-2008 §4.3.1 roundTiesToEven, which Go's
// float64→float32 conversion implements (Go spec, "Conversions between
// numeric types"); float32 range ±3.4028234663852886e38 (IEEE 754 binary32).
func TestConversions(t *testing.T) {
	cases := []struct {
		name string
		t    Type
		in   float64
		want float64 // read back as float64; NaN compares as NaN
		err  error
	}{
		{"0.1 to float rounds", Float32, 0.1, float64(float32(0.1)), nil},
		{"float max stays", Float32, math.MaxFloat32, math.MaxFloat32, nil},
		{"beyond float max", Float32, 3.5e38, 0, ErrRange},
		{"NaN to float", Float32, math.NaN(), math.NaN(), nil},
		{"-Inf to float", Float32, math.Inf(-1), math.Inf(-1), nil},
		{"NaN to int", Int32, math.NaN(), 0, ErrRange},
		{"Inf to int64", Int64, math.Inf(1), 0, ErrRange},
		{"fraction to short", Int16, 2.5, 0, ErrRange},
		{"300 to ubyte", Uint8, 300, 0, ErrRange},
		{"-1 to uint", Uint32, -1, 0, ErrRange},
		{"-0 to int", Int32, math.Copysign(0, -1), 0, nil},
		{"2^53 to int64", Int64, 1 << 53, 1 << 53, nil},
		{"-2^63 to int64", Int64, math.Ldexp(-1, 63), math.Ldexp(-1, 63), nil},
		{"2^63 to int64", Int64, math.Ldexp(1, 63), 0, ErrRange},
		{"2^64 to uint64", Uint64, math.Ldexp(1, 64), 0, ErrRange},
		{"2^63 to uint64", Uint64, math.Ldexp(1, 63), math.Ldexp(1, 63), nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := tempFile(t, "c.nc")
			w, err := Create(p, CreateOptions{})
			check(t, err)
			defer w.Abort()
			check(t, w.DefDim("one", 1))
			check(t, w.DefVar("v", c.t, []string{"one"}))
			check(t, w.EndDef())
			err = w.WriteFloat64s("v", nil, nil, []float64{c.in})
			if c.err != nil {
				if !errors.Is(err, c.err) {
					t.Fatalf("got %v, want %v", err, c.err)
				}
				return
			}
			check(t, err)
			check(t, w.Commit())
			f, err := Open(p)
			check(t, err)
			defer f.Close()
			got := make([]float64, 1)
			check(t, f.ReadFloat64s("v", nil, nil, got))
			same := got[0] == c.want && math.Signbit(got[0]) == math.Signbit(c.want) || math.IsNaN(got[0]) && math.IsNaN(c.want)
			if !same {
				t.Errorf("got %v, want %v", got[0], c.want)
			}
		})
	}
}

// TestReadConversionErrors: reading stored values that do not fit the
// destination names the value and its indices.
func TestReadConversionErrors(t *testing.T) {
	p := tempFile(t, "rc.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("x", 2))
	check(t, w.DefDim("y", 2))
	check(t, w.DefVar("d", Float64, []string{"x", "y"}))
	check(t, w.DefVar("big", Int64, []string{"x"}))
	check(t, w.DefVar("u64", Uint64, []string{"x"}))
	check(t, w.EndDef())
	check(t, w.WriteFloat64s("d", nil, nil, []float64{1, 2, 3, 0.5}))
	check(t, w.WriteInt64s("big", nil, nil, []int64{1, 1 << 40}))
	check(t, w.WriteFloat64s("u64", nil, nil, []float64{0, math.Ldexp(1, 63)}))
	check(t, w.Commit())
	f, err := Open(p)
	check(t, err)
	defer f.Close()

	err = f.ReadInt32s("d", nil, nil, make([]int32, 4))
	if !errors.Is(err, ErrRange) || err.Error() != fmt.Sprintf(`read %s: variable "d": value 0.5 at [x=1, y=1] does not fit int`, p) {
		t.Errorf("got %v", err)
	}
	// The part without the bad value reads fine.
	got := make([]int32, 3)
	check(t, f.ReadInt32s("d", []int{0, 0}, []int{1, 2}, got[:2]))
	err = f.ReadInt32s("big", nil, nil, make([]int32, 2))
	if !errors.Is(err, ErrRange) {
		t.Errorf("int64 2^40 as int32: got %v, want ErrRange", err)
	}
	err = f.ReadInt64s("u64", nil, nil, make([]int64, 2))
	if !errors.Is(err, ErrRange) {
		t.Errorf("uint64 2^63 as int64: got %v, want ErrRange", err)
	}
	x := make([]float64, 2)
	check(t, f.ReadFloat64s("u64", nil, nil, x))
	if x[1] != math.Ldexp(1, 63) {
		t.Errorf("uint64 2^63 as float64: got %v", x[1])
	}
}

// TestLargeConversion reads and writes more values than one scratch
// buffer holds, with a conversion, in an odd 3-D shape so the pieces cut
// across rows.
func TestLargeConversion(t *testing.T) {
	const nx, ny, nz = 7, 301, 257 // 541 499 values, about 2 MiB as float32 (two pieces and more)
	p := tempFile(t, "large.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("x", nx))
	check(t, w.DefDim("y", ny))
	check(t, w.DefDim("z", nz))
	check(t, w.DefVar("f", Float32, []string{"x", "y", "z"}))
	check(t, w.DefVar("i", Int16, []string{"x", "y", "z"}))
	check(t, w.EndDef())
	src := make([]float64, nx*ny*nz)
	for i := range src {
		src[i] = float64(i%30000) - 15000
	}
	check(t, w.WriteFloat64s("f", nil, nil, src))
	check(t, w.WriteFloat64s("i", nil, nil, src))
	check(t, w.Commit())
	f, err := Open(p)
	check(t, err)
	defer f.Close()
	for _, name := range []string{"f", "i"} {
		got := make([]float64, len(src))
		check(t, f.ReadFloat64s(name, nil, nil, got))
		if !slices.Equal(got, src) {
			t.Errorf("%s: whole read differs", name)
		}
		// An interior box.
		st, ct := []int{2, 10, 5}, []int{3, 200, 250}
		box := make([]int64, 3*200*250)
		check(t, f.ReadInt64s(name, st, ct, box))
		k := 0
		for i := range ct[0] {
			for j := range ct[1] {
				for l := range ct[2] {
					if want := src[((st[0]+i)*ny+st[1]+j)*nz+st[2]+l]; float64(box[k]) != want {
						t.Fatalf("%s box (%d,%d,%d): got %d, want %g", name, i, j, l, box[k], want)
					}
					k++
				}
			}
		}
	}
}
