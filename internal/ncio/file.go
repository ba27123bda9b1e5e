package ncio

import (
	"fmt"
	"math"
	"strings"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// Dim describes a dimension.
type Dim struct {
	Name      string
	Len       int  // current length; for an unlimited dimension, the records written so far
	Unlimited bool // the record dimension, which grows as data is written
}

// Var describes a variable.
type Var struct {
	Name  string
	Type  Type
	Dims  []string // dimension names, slowest-varying first (C order)
	Shape []int    // the lengths of Dims
}

// Len returns the number of values in v: the product of Shape, 1 for a scalar.
func (v Var) Len() int {
	n := 1
	for _, l := range v.Shape {
		n *= l
	}
	return n
}

// Attr describes an attribute.
type Attr struct {
	Name string
	Type Type
	Len  int // number of values; bytes for Char, strings for String
}

// attr is an attribute with its value, read when the file is opened.
type attr struct {
	Attr
	raw  []uint64 // numeric values in the stored type (aligned)
	text string   // Char
	strs []string // String
}

type variable struct {
	Var
	id    int
	shp   shape
	attrs []attr
}

// File is a NetCDF file open for reading. Its metadata (dimensions,
// variables, attributes and their values) is read once by Open and never
// changes; data is read on demand. All methods are safe for concurrent use.
type File struct {
	path   string
	ncid   int
	dims   []Dim
	vars   []variable
	byName map[string]int
	global []attr
	closed bool // only the I/O goroutine touches it
}

// Open opens a NetCDF file (classic, 64-bit offset, CDF-5 or NetCDF-4) for
// reading and reads its metadata. Only the root group is seen. Files that
// do not start with a NetCDF or HDF5 signature are refused before the C
// library sees them (ErrFormat); a missing file gives an error matching
// fs.ErrNotExist.
func Open(path string) (*File, error) {
	fail := func(kind error, msg string, cause error) error {
		return &Error{Op: "open", Path: path, Kind: kind, Msg: msg, Err: cause}
	}
	if strings.IndexByte(path, 0) >= 0 {
		return nil, fail(ErrInvalid, "path contains a NUL byte", nil)
	}
	size, hdf5, kind, msg, cause := sniff(path)
	if kind != nil || cause != nil {
		return nil, fail(kind, msg, cause)
	}
	f := &File{path: path, byName: make(map[string]int)}
	var err error
	run(func() {
		ds, e := netcdf.OpenFile(path, netcdf.NOWRITE)
		if e != nil {
			err = fail(nil, "", wrapLib(e))
			return
		}
		f.ncid = int(ds)
		if err = f.load(ds, size); err != nil {
			if !hdf5 {
				ds.Close()
			}
			// else leak the handle: nc_close of a NetCDF-4 file whose
			// metadata failed to load can free an invalid pointer and
			// abort the process (netCDF-C 4.9.0, found by FuzzOpen).
		}
	})
	if err != nil {
		return nil, err
	}
	return f, nil
}

// load reads all metadata. Runs on the I/O goroutine.
func (f *File) load(ds netcdf.Dataset, size int64) error {
	bad := func(varName, attrName, msg string, cause error) error {
		return &Error{Op: "open", Path: f.path, Var: varName, Attr: attrName, Kind: ErrFormat, Msg: msg, Err: wrapLib(cause)}
	}
	ids, err := dimIDs(f.ncid)
	if err != nil {
		return bad("", "", "listing dimensions", err)
	}
	unlim, err := unlimitedIDs(f.ncid)
	if err != nil {
		return bad("", "", "listing unlimited dimensions", err)
	}
	dimAt := make(map[int]int, len(ids))
	for _, id := range ids {
		name, n, err := dimInfo(f.ncid, id)
		if err != nil {
			return bad("", "", fmt.Sprintf("dimension id %d", id), err)
		}
		d := Dim{Name: name, Len: n}
		for _, u := range unlim {
			d.Unlimited = d.Unlimited || u == id
		}
		if n < 0 {
			return bad("", "", fmt.Sprintf("dimension %q has length %d", name, n), nil)
		}
		dimAt[id] = len(f.dims)
		f.dims = append(f.dims, d)
	}
	if f.global, err = f.loadAttrs(ds, "", globalID, size); err != nil {
		return err
	}
	nvars, err := ds.NVars()
	if err != nil {
		return bad("", "", "counting variables", err)
	}
	for id := range nvars {
		nv := ds.VarN(id)
		name, err := nv.Name()
		if err != nil {
			return bad("", "", fmt.Sprintf("variable id %d", id), err)
		}
		t, err := nv.Type()
		if err != nil {
			return bad(name, "", "variable type", err)
		}
		dids, err := varDimIDs(f.ncid, id)
		if err != nil {
			return bad(name, "", "variable dimensions", err)
		}
		v := variable{Var: Var{Name: name, Type: Type(t)}, id: id}
		n := 1
		for _, did := range dids {
			k, ok := dimAt[did]
			if !ok {
				return bad(name, "", fmt.Sprintf("uses dimension id %d, which is not in the root group", did), nil)
			}
			d := f.dims[k]
			if d.Len != 0 && n > math.MaxInt/d.Len {
				return bad(name, "", "more values than an int can count", nil)
			}
			n *= d.Len
			v.Dims = append(v.Dims, d.Name)
			v.Shape = append(v.Shape, d.Len)
			v.shp.unlimited = append(v.shp.unlimited, d.Unlimited)
		}
		v.shp.dims, v.shp.lens = v.Dims, v.Shape
		if v.attrs, err = f.loadAttrs(ds, name, id, size); err != nil {
			return err
		}
		if _, dup := f.byName[name]; dup {
			return bad(name, "", "defined twice", nil)
		}
		f.byName[name] = len(f.vars)
		f.vars = append(f.vars, v)
	}
	return nil
}

// loadAttrs reads the attributes of variable id (globalID for the file).
// An attribute claiming more bytes than the whole file is refused: no
// format stores attribute values compressed.
func (f *File) loadAttrs(ds netcdf.Dataset, varName string, id int, size int64) ([]attr, error) {
	bad := func(attrName, msg string, cause error) error {
		return &Error{Op: "open", Path: f.path, Var: varName, Attr: attrName, Kind: ErrFormat, Msg: msg, Err: wrapLib(cause)}
	}
	var nv netcdf.Var
	var n int
	var err error
	if id == globalID {
		n, err = ds.NAttrs()
	} else {
		nv = ds.VarN(id)
		n, err = nv.NAttrs()
	}
	if err != nil {
		return nil, bad("", "counting attributes", err)
	}
	out := make([]attr, 0, n)
	for i := range n {
		var a netcdf.Attr
		if id == globalID {
			a, err = ds.AttrN(i)
		} else {
			a, err = nv.AttrN(i)
		}
		if err != nil {
			return nil, bad("", fmt.Sprintf("attribute number %d", i), err)
		}
		t, err := a.Type()
		if err != nil {
			return nil, bad(a.Name(), "attribute type", err)
		}
		l, err := a.Len()
		if err != nil {
			return nil, bad(a.Name(), "attribute length", err)
		}
		at := attr{Attr: Attr{Name: a.Name(), Type: Type(t), Len: int(l)}}
		sz := max(Type(t).size(), 1)
		if l > uint64(size) || int64(l)*int64(sz) > size {
			return nil, bad(at.Name, fmt.Sprintf("claims %d values, more than the file's %d bytes", l, size), nil)
		}
		switch {
		case at.Type == String:
			if at.strs, err = getAttStrings(f.ncid, id, at.Name, at.Len); err != nil {
				return nil, bad(at.Name, "reading strings", err)
			}
		case at.Type.size() > 0 && at.Len > 0:
			buf := make([]uint64, (at.Len*sz+7)/8)
			if err := getAtt(f.ncid, id, at.Name, unsafe.Pointer(&buf[0])); err != nil {
				return nil, bad(at.Name, "reading values", err)
			}
			if at.Type == Char {
				b := unsafe.Slice((*byte)(unsafe.Pointer(&buf[0])), at.Len)
				at.text = strings.TrimRight(string(b), "\x00")
			} else {
				at.raw = buf
			}
		}
		out = append(out, at)
	}
	return out, nil
}

// Path returns the path the file was opened with.
func (f *File) Path() string { return f.path }

// Close closes the file. A second Close returns an error matching ErrClosed.
func (f *File) Close() error {
	var err error
	run(func() {
		if f.closed {
			err = &Error{Op: "close", Path: f.path, Kind: ErrClosed}
			return
		}
		f.closed = true
		if e := netcdf.Dataset(f.ncid).Close(); e != nil {
			err = &Error{Op: "close", Path: f.path, Err: wrapLib(e)}
		}
	})
	return err
}

// Dims returns the dimensions of the root group in the file's order.
func (f *File) Dims() []Dim {
	return append([]Dim(nil), f.dims...)
}

// Dim returns the dimension called name (ErrNotFound if there is none).
func (f *File) Dim(name string) (Dim, error) {
	for _, d := range f.dims {
		if d.Name == name {
			return d, nil
		}
	}
	return Dim{}, &Error{Op: "read", Path: f.path, Kind: ErrNotFound, Msg: fmt.Sprintf("dimension %s not found", quote(name))}
}

// Vars returns the variables in the file's order.
func (f *File) Vars() []Var {
	out := make([]Var, len(f.vars))
	for i, v := range f.vars {
		out[i] = v.clone()
	}
	return out
}

// Var returns the variable called name (ErrNotFound if there is none).
func (f *File) Var(name string) (Var, error) {
	v, err := f.lookup("read", name)
	if err != nil {
		return Var{}, err
	}
	return v.clone(), nil
}

func (v *variable) clone() Var {
	c := v.Var
	c.Dims = append([]string(nil), v.Dims...)
	c.Shape = append([]int(nil), v.Shape...)
	return c
}

func (f *File) lookup(op, name string) (*variable, error) {
	i, ok := f.byName[name]
	if !ok {
		return nil, &Error{Op: op, Path: f.path, Var: name, Kind: ErrNotFound, Msg: "no such variable"}
	}
	return &f.vars[i], nil
}
