package ncio

// This file holds the few C calls that github.com/fhs/go-netcdf does not
// wrap (or wraps in a way we cannot use: its slice calls refuse appends
// along the unlimited dimension and panic on scalars). Every function here
// must run on the I/O goroutine (see worker.go).

/*
#cgo pkg-config: netcdf
#include <stdlib.h>
#include <netcdf.h>
#include <dlfcn.h>

// colbridge_silence_hdf5 turns off HDF5's automatic error printing for the
// calling thread (HDF5 keeps error stacks per thread when built thread-safe).
// It looks H5Eset_auto2 up at run time instead of linking libhdf5 directly:
// libnetcdf already loads it, and a NetCDF built without HDF5 simply has
// nothing to silence. Returns 1 if silenced, 0 if HDF5 is not loaded,
// -1 if the HDF5 call failed.
static int colbridge_silence_hdf5(void) {
	typedef int (*set_auto_fn)(long long estack, void *func, void *data);
	set_auto_fn f = (set_auto_fn)dlsym(RTLD_DEFAULT, "H5Eset_auto2");
	if (f == NULL) {
		return 0;
	}
	// H5E_DEFAULT is (hid_t)0 in HDF5 1.8 to 1.14.
	return f(0, NULL, NULL) < 0 ? -1 : 1;
}
*/
import "C"

import (
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// Default fill values of netcdf.h (NC_FILL_*): what unwritten elements hold
// when a variable has no _FillValue attribute and fill mode is on.
var defaultFill = map[Type]float64{
	Int8:    C.NC_FILL_BYTE,
	Int16:   C.NC_FILL_SHORT,
	Int32:   C.NC_FILL_INT,
	Float32: float64(float32(C.NC_FILL_FLOAT)),
	Float64: C.NC_FILL_DOUBLE,
	Uint8:   C.NC_FILL_UBYTE,
	Uint16:  C.NC_FILL_USHORT,
	Uint32:  C.NC_FILL_UINT,
	Int64:   C.NC_FILL_INT64,
	Uint64:  C.NC_FILL_UINT64,
}

// silenceHDF5 reports whether HDF5's error printing was turned off on the
// calling OS thread; false also when HDF5 is not loaded at all.
func silenceHDF5() (silenced bool, hdf5Loaded bool) {
	switch C.colbridge_silence_hdf5() {
	case 1:
		return true, true
	case -1:
		return false, true
	}
	return false, false
}

// libErr converts a NetCDF status code to an error; nil for NC_NOERR.
func libErr(status C.int) error {
	if status == C.NC_NOERR {
		return nil
	}
	return &LibError{Code: int(status), Msg: C.GoString(C.nc_strerror(status))}
}

// wrapLib converts an error of the binding (a bare library code) to a *LibError.
func wrapLib(err error) error {
	if e, ok := err.(netcdf.Error); ok {
		return libErr(C.int(e))
	}
	return err
}

// sizeTs converts Go ints to a C size_t array in C memory (so no Go pointer
// is stored where C could keep it). The caller frees it. n == 0 gives nil.
func sizeTs(v []int) *C.size_t {
	if len(v) == 0 {
		return nil
	}
	p := (*C.size_t)(C.malloc(C.size_t(len(v)) * C.size_t(unsafe.Sizeof(C.size_t(0)))))
	s := unsafe.Slice(p, len(v))
	for i, x := range v {
		s[i] = C.size_t(x)
	}
	return p
}

// getVara reads a hyperslab in the variable's own type into buf, which must
// hold product(count) values of that type. No conversion happens.
func getVara(ncid, varid int, start, count []int, buf unsafe.Pointer) error {
	cs, cc := sizeTs(start), sizeTs(count)
	defer C.free(unsafe.Pointer(cs))
	defer C.free(unsafe.Pointer(cc))
	return libErr(C.nc_get_vara(C.int(ncid), C.int(varid), cs, cc, buf))
}

// putVara writes a hyperslab from buf, which holds product(count) values of
// the variable's own type. Unlike the binding, it lets the library grow an
// unlimited dimension.
func putVara(ncid, varid int, start, count []int, buf unsafe.Pointer) error {
	cs, cc := sizeTs(start), sizeTs(count)
	defer C.free(unsafe.Pointer(cs))
	defer C.free(unsafe.Pointer(cc))
	return libErr(C.nc_put_vara(C.int(ncid), C.int(varid), cs, cc, buf))
}

// getAtt reads a numeric or CHAR attribute in its own type into buf.
func getAtt(ncid, varid int, name string, buf unsafe.Pointer) error {
	cn := C.CString(name)
	defer C.free(unsafe.Pointer(cn))
	return libErr(C.nc_get_att(C.int(ncid), C.int(varid), cn, buf))
}

// putAtt writes n values of type t from buf as attribute name.
func putAtt(ncid, varid int, name string, t Type, n int, buf unsafe.Pointer) error {
	cn := C.CString(name)
	defer C.free(unsafe.Pointer(cn))
	return libErr(C.nc_put_att(C.int(ncid), C.int(varid), cn, C.nc_type(t), C.size_t(n), buf))
}

// getAttStrings reads an NC_STRING attribute of n values.
func getAttStrings(ncid, varid int, name string, n int) ([]string, error) {
	if n == 0 {
		return []string{}, nil
	}
	cn := C.CString(name)
	defer C.free(unsafe.Pointer(cn))
	arr := (**C.char)(C.calloc(C.size_t(n), C.size_t(unsafe.Sizeof((*C.char)(nil)))))
	defer C.free(unsafe.Pointer(arr))
	if err := libErr(C.nc_get_att_string(C.int(ncid), C.int(varid), cn, arr)); err != nil {
		return nil, err
	}
	defer C.nc_free_string(C.size_t(n), arr)
	out := make([]string, n)
	for i, p := range unsafe.Slice(arr, n) {
		if p != nil {
			out[i] = C.GoString(p)
		}
	}
	return out, nil
}

// putAttStrings writes an NC_STRING attribute (NetCDF-4 files only).
func putAttStrings(ncid, varid int, name string, vals []string) error {
	cn := C.CString(name)
	defer C.free(unsafe.Pointer(cn))
	n := len(vals)
	arr := (**C.char)(C.calloc(C.size_t(max(n, 1)), C.size_t(unsafe.Sizeof((*C.char)(nil)))))
	defer C.free(unsafe.Pointer(arr))
	s := unsafe.Slice(arr, max(n, 1))
	for i, v := range vals {
		s[i] = C.CString(v)
	}
	defer func() {
		for i := range vals {
			C.free(unsafe.Pointer(s[i]))
		}
	}()
	return libErr(C.nc_put_att_string(C.int(ncid), C.int(varid), cn, C.size_t(n), arr))
}

// dimIDs lists the dimension ids of the root group.
func dimIDs(ncid int) ([]int, error) {
	var n C.int
	if err := libErr(C.nc_inq_dimids(C.int(ncid), &n, nil, 0)); err != nil {
		return nil, err
	}
	if n <= 0 {
		return nil, nil
	}
	ids := make([]C.int, n)
	if err := libErr(C.nc_inq_dimids(C.int(ncid), &n, &ids[0], 0)); err != nil {
		return nil, err
	}
	out := make([]int, n)
	for i, id := range ids[:n] {
		out[i] = int(id)
	}
	return out, nil
}

// dimInfo returns a dimension's name and current length.
func dimInfo(ncid, dimid int) (string, int, error) {
	var buf [C.NC_MAX_NAME + 1]C.char
	var n C.size_t
	if err := libErr(C.nc_inq_dim(C.int(ncid), C.int(dimid), &buf[0], &n)); err != nil {
		return "", 0, err
	}
	return C.GoString(&buf[0]), int(n), nil
}

// unlimitedIDs lists the unlimited dimensions of the root group.
func unlimitedIDs(ncid int) ([]int, error) {
	var n C.int
	if err := libErr(C.nc_inq_unlimdims(C.int(ncid), &n, nil)); err != nil {
		return nil, err
	}
	if n <= 0 {
		return nil, nil
	}
	ids := make([]C.int, n)
	if err := libErr(C.nc_inq_unlimdims(C.int(ncid), &n, &ids[0])); err != nil {
		return nil, err
	}
	out := make([]int, n)
	for i, id := range ids[:n] {
		out[i] = int(id)
	}
	return out, nil
}

// varDimIDs returns the dimension ids of a variable.
func varDimIDs(ncid, varid int) ([]int, error) {
	var n C.int
	if err := libErr(C.nc_inq_varndims(C.int(ncid), C.int(varid), &n)); err != nil {
		return nil, err
	}
	if n <= 0 {
		return nil, nil
	}
	if n > C.NC_MAX_VAR_DIMS {
		return nil, &LibError{Code: int(C.NC_EMAXDIMS), Msg: C.GoString(C.nc_strerror(C.NC_EMAXDIMS))}
	}
	ids := make([]C.int, n)
	if err := libErr(C.nc_inq_vardimid(C.int(ncid), C.int(varid), &ids[0])); err != nil {
		return nil, err
	}
	out := make([]int, n)
	for i, id := range ids {
		out[i] = int(id)
	}
	return out, nil
}

// defChunking sets chunked storage with the given chunk lengths.
func defChunking(ncid, varid int, chunks []int) error {
	cc := sizeTs(chunks)
	defer C.free(unsafe.Pointer(cc))
	return libErr(C.nc_def_var_chunking(C.int(ncid), C.int(varid), C.NC_CHUNKED, cc))
}

// varID returns the id of the variable called name in the root group.
func varID(ncid int, name string) (int, error) {
	cn := C.CString(name)
	defer C.free(unsafe.Pointer(cn))
	var id C.int
	if err := libErr(C.nc_inq_varid(C.int(ncid), cn, &id)); err != nil {
		return 0, err
	}
	return int(id), nil
}

// globalID is NC_GLOBAL, the variable id of global attributes.
const globalID = C.NC_GLOBAL
