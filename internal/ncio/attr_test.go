package ncio

import (
	"errors"
	"math"
	"slices"
	"testing"
)

// TestAttributes writes every attribute kind and reads it back with each
// getter; wrong kinds give ErrType, lossy ones ErrRange.
func TestAttributes(t *testing.T) {
	p := tempFile(t, "attrs.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("n", 2))
	check(t, w.DefVar("u", Float32, []string{"n"}))
	check(t, w.DefVar("k", Int16, []string{"n"}))
	check(t, w.PutAttrText("", "title", "a mesh"))
	check(t, w.PutAttrText("", "empty", ""))
	check(t, w.PutAttrText("", "nul", "abc\x00")) // some writers store the C terminator
	check(t, w.PutAttrStrings("", "one_string", "ünïcode"))
	check(t, w.PutAttrStrings("", "two_strings", "alpha", "beta"))
	check(t, w.PutAttrFloat64s("", "coeffs", 0.5, -1e300, math.Inf(1)))
	check(t, w.PutAttrInt32s("", "ints", -7, 1<<30))
	check(t, w.PutAttrInt64s("", "big", 1<<53+1, math.MinInt64))
	check(t, w.PutAttrFloat64s("u", "_FillValue", -999))
	check(t, w.PutAttrFloat64s("u", "missing_value", -998, -997))
	check(t, w.PutAttrFloat64s("u", "scale", 0.25))
	check(t, w.PutAttrInt32s("k", "valid_range", -100, 100))
	check(t, w.Commit())

	f, err := Open(p)
	check(t, err)
	defer f.Close()

	texts := []struct{ v, a, want string }{
		{"", "title", "a mesh"},
		{"", "empty", ""},
		{"", "nul", "abc"},
		{"", "one_string", "ünïcode"},
	}
	for _, c := range texts {
		got, err := f.AttrText(c.v, c.a)
		if err != nil || got != c.want {
			t.Errorf("AttrText(%q, %q) = %q, %v; want %q", c.v, c.a, got, err, c.want)
		}
	}
	floats := []struct {
		v, a string
		want []float64
	}{
		{"", "coeffs", []float64{0.5, -1e300, math.Inf(1)}},
		{"", "ints", []float64{-7, 1 << 30}},
		{"", "big", []float64{1 << 53, math.MinInt64}}, // 2^53+1 rounds to even (IEEE 754 roundTiesToEven)
		{"u", "missing_value", []float64{-998, -997}},
		{"u", "scale", []float64{0.25}},
		{"k", "valid_range", []float64{-100, 100}},
	}
	for _, c := range floats {
		got, err := f.AttrFloat64s(c.v, c.a)
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("AttrFloat64s(%q, %q) = %v, %v; want %v", c.v, c.a, got, err, c.want)
		}
	}
	ints := []struct {
		v, a string
		want []int64
	}{
		{"", "ints", []int64{-7, 1 << 30}},
		{"", "big", []int64{1<<53 + 1, math.MinInt64}},
		{"u", "_FillValue", []int64{-999}},
	}
	for _, c := range ints {
		got, err := f.AttrInt64s(c.v, c.a)
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("AttrInt64s(%q, %q) = %v, %v; want %v", c.v, c.a, got, err, c.want)
		}
	}

	// Types as stored: the CF/NUG attributes follow the variable's type.
	wantTypes := []struct {
		v, a string
		t    Type
		n    int
	}{
		{"", "title", Char, 6},
		{"", "two_strings", String, 2},
		{"", "coeffs", Float64, 3},
		{"", "ints", Int32, 2},
		{"", "big", Int64, 2},
		{"u", "_FillValue", Float32, 1},
		{"u", "missing_value", Float32, 2},
		{"u", "scale", Float64, 1},
		{"k", "valid_range", Int16, 2},
	}
	for _, c := range wantTypes {
		as, err := f.Attrs(c.v)
		check(t, err)
		i := slices.IndexFunc(as, func(a Attr) bool { return a.Name == c.a })
		if i < 0 || as[i].Type != c.t || as[i].Len != c.n {
			t.Errorf("attribute %q of %q: got %+v, want type %s length %d", c.a, c.v, as, c.t, c.n)
		}
	}

	fv, ok, err := f.FillValue("u")
	if err != nil || !ok || fv != -999 {
		t.Errorf("FillValue(u) = %v, %v, %v", fv, ok, err)
	}
	mv, err := f.MissingValues("u")
	if err != nil || !slices.Equal(mv, []float64{-998, -997}) {
		t.Errorf("MissingValues(u) = %v, %v", mv, err)
	}
	// Without _FillValue: the default of netcdf.h, NC_FILL_SHORT = -32767.
	fv, ok, err = f.FillValue("k")
	if err != nil || ok || fv != -32767 {
		t.Errorf("FillValue(k) = %v, %v, %v; want -32767, false", fv, ok, err)
	}
	if mv, err := f.MissingValues("k"); mv != nil || err != nil {
		t.Errorf("MissingValues(k) = %v, %v; want nil, nil", mv, err)
	}

	bad := []struct {
		name string
		err  error
		kind error
	}{
		{"text of a number", errOnly(f.AttrText("", "coeffs")), ErrType},
		{"text of two strings", errOnly(f.AttrText("", "two_strings")), ErrType},
		{"numbers of text", errOnly(f.AttrFloat64s("", "title")), ErrType},
		{"int64 of 0.5", errOnly(f.AttrInt64s("", "coeffs")), ErrRange},
		{"missing attribute", errOnly(f.AttrText("u", "nope")), ErrNotFound},
		{"attribute of missing variable", errOnly(f.AttrText("nope", "units")), ErrNotFound},
		{"fill of missing variable", errOnly(f.MissingValues("nope")), ErrNotFound},
	}
	for _, c := range bad {
		if !errors.Is(c.err, c.kind) {
			t.Errorf("%s: got %v, want %v", c.name, c.err, c.kind)
		}
	}
	err = errOnly(f.AttrText("u", "nope"))
	if want := `read ` + p + `: variable "u": attribute "nope": no such attribute`; err.Error() != want {
		t.Errorf("message %q, want %q", err, want)
	}
}

func errOnly[T any](_ T, err error) error { return err }

// TestAttributeErrors: a _FillValue that does not fit the variable's type,
// NC_STRING in a classic file, an attribute of an unknown variable.
func TestAttributeErrors(t *testing.T) {
	cases := []struct {
		name   string
		format Format
		put    func(w *Writer) error
		kind   error
	}{
		{"fill 300 on a byte", NetCDF4, func(w *Writer) error { return w.PutAttrFloat64s("b", "_FillValue", 300) }, ErrRange},
		{"fill 0.5 on an int", NetCDF4, func(w *Writer) error { return w.PutAttrFloat64s("i", "_FillValue", 0.5) }, ErrRange},
		{"unknown variable", NetCDF4, func(w *Writer) error { return w.PutAttrText("nope", "units", "m") }, ErrNotFound},
		{"empty name", NetCDF4, func(w *Writer) error { return w.PutAttrText("", "", "m") }, ErrInvalid},
		{"string in classic", Classic64, func(w *Writer) error { return w.PutAttrStrings("", "s", "x") }, nil},
		{"int64 in classic", Classic64, func(w *Writer) error { return w.PutAttrInt64s("", "s", 1) }, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := tempFile(t, "e.nc")
			w, err := Create(p, CreateOptions{Format: c.format})
			check(t, err)
			defer w.Abort()
			check(t, w.DefDim("n", 1))
			check(t, w.DefVar("b", Int8, []string{"n"}))
			check(t, w.DefVar("i", Int32, []string{"n"}))
			err = c.put(w)
			var e *Error
			if err == nil || !errors.As(err, &e) || e.Path != p {
				t.Fatalf("got %v, want an *Error naming %s", err, p)
			}
			if c.kind != nil && !errors.Is(err, c.kind) {
				t.Errorf("got %v, want %v", err, c.kind)
			}
			var le *LibError
			if c.kind == nil && !errors.As(err, &le) {
				t.Errorf("got %v, want the library's refusal", err)
			}
		})
	}
}
