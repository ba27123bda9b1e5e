package ncio

import (
	"fmt"
	"unsafe"
)

// Attribute getters. varName "" means the file's global attributes.

// Attrs returns the attributes of variable varName ("" for global ones)
// in the file's order.
func (f *File) Attrs(varName string) ([]Attr, error) {
	as, err := f.attrsOf(varName)
	if err != nil {
		return nil, err
	}
	out := make([]Attr, len(as))
	for i, a := range as {
		out[i] = a.Attr
	}
	return out, nil
}

func (f *File) attrsOf(varName string) ([]attr, error) {
	if varName == "" {
		return f.global, nil
	}
	v, err := f.lookup("read", varName)
	if err != nil {
		return nil, err
	}
	return v.attrs, nil
}

func (f *File) attr(varName, name string) (*attr, error) {
	as, err := f.attrsOf(varName)
	if err != nil {
		return nil, err
	}
	for i := range as {
		if as[i].Name == name {
			return &as[i], nil
		}
	}
	return nil, f.attrErr(varName, name, ErrNotFound, "no such attribute")
}

func (f *File) attrErr(varName, name string, kind error, msg string) error {
	return &Error{Op: "read", Path: f.path, Var: varName, Attr: name, Kind: kind, Msg: msg}
}

// AttrText returns a text attribute: a Char attribute (trailing NUL bytes,
// which some writers store, are removed) or a String attribute holding
// exactly one string. Numbers give ErrType.
func (f *File) AttrText(varName, name string) (string, error) {
	a, err := f.attr(varName, name)
	if err != nil {
		return "", err
	}
	switch {
	case a.Type == Char:
		return a.text, nil
	case a.Type == String && len(a.strs) == 1:
		return a.strs[0], nil
	case a.Type == String:
		return "", f.attrErr(varName, name, ErrType, fmt.Sprintf("holds %d strings, not one", len(a.strs)))
	}
	return "", f.attrErr(varName, name, ErrType, fmt.Sprintf("is %s, not text", a.Type))
}

// AttrFloat64s returns a numeric attribute of any type as float64 values
// (64-bit integers beyond 2^53 round to nearest). Text gives ErrType.
func (f *File) AttrFloat64s(varName, name string) ([]float64, error) {
	return attrNumbers[float64](f, varName, name)
}

// AttrInt64s returns a numeric attribute as int64 values. Floating values
// must be integral and every value in range, else ErrRange. Text gives
// ErrType.
func (f *File) AttrInt64s(varName, name string) ([]int64, error) {
	return attrNumbers[int64](f, varName, name)
}

func attrNumbers[T number](f *File, varName, name string) ([]T, error) {
	a, err := f.attr(varName, name)
	if err != nil {
		return nil, err
	}
	if !a.Type.IsNumeric() {
		return nil, f.attrErr(varName, name, ErrType, fmt.Sprintf("is %s, not numeric", a.Type))
	}
	out := make([]T, a.Len)
	if a.Len == 0 {
		return out, nil
	}
	p := unsafe.Pointer(&a.raw[0])
	if bad, _ := fromStored(out, a.Type, p, a.Len); bad >= 0 {
		return nil, f.attrErr(varName, name, ErrRange,
			fmt.Sprintf("value %s (index %d) does not fit %s", storedString(a.Type, p, bad), bad, typeOf[T]()))
	}
	return out, nil
}

// FillValue returns the _FillValue attribute of variable varName as a
// float64 and true; without one it returns the library's default fill for
// the variable's type (netcdf.h NC_FILL_*, which unwritten elements hold)
// and false. The value is exact for every type but 64-bit integers beyond
// 2^53, which round to nearest.
func (f *File) FillValue(varName string) (float64, bool, error) {
	v, err := f.lookup("read", varName)
	if err != nil {
		return 0, false, err
	}
	for _, a := range v.attrs {
		if a.Name == "_FillValue" {
			x, err := attrNumbers[float64](f, varName, a.Name)
			if err != nil {
				return 0, false, err
			}
			if len(x) != 1 {
				return 0, false, f.attrErr(varName, a.Name, ErrFormat, fmt.Sprintf("has %d values, not one", len(x)))
			}
			return x[0], true, nil
		}
	}
	return defaultFill[v.Type], false, nil
}

// MissingValues returns the missing_value attribute of variable varName
// (CF allows a vector of them), or nil if there is none.
func (f *File) MissingValues(varName string) ([]float64, error) {
	v, err := f.lookup("read", varName)
	if err != nil {
		return nil, err
	}
	for _, a := range v.attrs {
		if a.Name == "missing_value" {
			return attrNumbers[float64](f, varName, a.Name)
		}
	}
	return nil, nil
}
