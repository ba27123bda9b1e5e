// Package ncio is colbridge's only door to the NetCDF C library: it reads
// and writes the NetCDF files of meshes, maps and fields for the other
// packages, which never see cgo. It is built on github.com/fhs/go-netcdf
// (open, create, define, list) plus a few C calls of its own for what that
// binding lacks (hyperslab I/O without its bounds check, NC_STRING
// attributes, chunking, listing dimensions, silencing HDF5).
//
// # One goroutine for the C library
//
// netCDF-C and the HDF5 library under it are not thread-safe: eight
// goroutines reading eight different files crashed in 2 of 10 runs on this
// project's machines. A mutex is not enough either, because a thread-safe
// HDF5 keeps its error-printing switch per OS thread and prints
// "HDF5-DIAG" noise to stderr from every new thread that hits an error.
// So every library call runs on one goroutine, started on first use and
// locked to its OS thread with runtime.LockOSThread, which first turns
// HDF5's automatic error printing off (H5Eset_auto2(H5E_DEFAULT, NULL,
// NULL)). H5Eset_auto2 is looked up at run time with dlsym in the libhdf5
// that libnetcdf has already loaded, rather than linked: no second link
// dependency, no header, and a NetCDF built without HDF5 just has nothing
// to silence. Library errors still come back, through nc_strerror, in the
// returned errors.
//
// Every exported method is an ordinary blocking call, safe for concurrent
// use: it checks its arguments, ships a closure to that goroutine and
// waits. The hand-over between OS threads costs about 25 µs a call on the
// project's 2-core machine (BenchmarkReadOne), so read and write slabs,
// not single values. A panic inside the
// closure (a programming error) is carried back and re-raised in the
// caller. Library calls are therefore serialised; do the arithmetic in
// parallel around them. File metadata (dimensions, variables, attributes
// and their values) is read once by Open and is immutable afterwards, so
// listing and attribute getters do not touch the C library at all.
//
// # Conversion
//
// The binding reads and writes only in the stored type. ncio reads any
// numeric type (byte, ubyte, short, ushort, int, uint, int64, uint64,
// float, double) into []float64, []float32, []int32 or []int64, and writes
// those (WriteFloat64s, WriteFloat32s, WriteInt32s, WriteInt64s) into a
// variable of any numeric type. When the types match, data goes straight
// between the caller's slice and the library. Otherwise the hyperslab is
// split into row-major pieces of at most 1 MiB of stored values
// (scratchBytes), each read into a scratch buffer owned by the I/O
// goroutine and converted, so converting never allocates a second array
// of the full size. The rules, the same both ways:
//
//   - to float64: every value (int64 and uint64 beyond 2^53 round to nearest);
//   - to float32: round to nearest; a finite value that would round to
//     ±Inf (beyond about ±3.4028235e38) is an error (ErrRange) rather than a
//     silent infinity; NaN and ±Inf pass;
//   - to an integer type: only exactly (integral and in range); NaN, 0.5,
//     or 300 into a byte give ErrRange naming the value and its indices.
//
// ncio reads stored values: it applies neither scale_factor/add_offset nor
// _Unsigned, and does not replace fill values; FillValue and MissingValues
// report them so callers can.
//
// # Writing: never half a file
//
// Create writes to "<dir>/.<base>.tmp-<random>" in the target's directory
// (NetCDF-4 by default, or the classic 64-bit offset format). Commit
// closes the file, fsyncs it, renames it over the final path (os.Rename,
// atomic within one directory on POSIX file systems) and fsyncs the
// directory. Until Commit nothing exists under the final name; Abort (or a
// failure anywhere before the rename) deletes the temporary file. Errors
// are sticky as in bufio.Writer: after the first failed call the Writer
// refuses further work, and Commit returns that error and discards the
// file, so ignoring an error from one Write cannot produce a file with a
// hole in it. Appends along an unlimited dimension go through our own
// nc_put_vara call, since the binding's Go-side bounds check refuses them.
// InjectWriteFault makes the k-th write fail, for tests of callers.
//
// # Errors
//
// Every error is an *Error whose message names the operation, the file,
// and where relevant the variable and attribute, then the problem and the
// library's own message:
//
//	read /data/x.nc: variable "u": start+count exceeds dimension "nCells" (length 24)
//	open /data/y.nc: NetCDF: HDF error
//
// errors.Is works with the kinds in errors.go (ErrNotFound, ErrBounds,
// ErrType, ErrRange, ErrFormat, ErrClosed, ErrState, ErrInvalid,
// ErrInjected) and with fs.ErrNotExist for missing files; errors.As gives
// the *Error and, for library failures, the *LibError with its code.
// Shapes, start and count are checked in Go before any C call, so a bad
// request never reaches the library; a wrong destination length is a
// programming error and panics.
//
// # Damaged files
//
// Open refuses, before the C library sees them, files without a NetCDF or
// HDF5 signature and classic files whose header does not parse or whose
// data would run past the end of the file: a Go walk of the classic header
// grammar checks every count against the bytes left in the file, because
// netCDF-C 4.9.0 crashes on headers that claim, say, 1.6e9 dimensions, and
// reads zeros without complaint past the end of a truncated file. FuzzOpen
// found no crash in the classic path in about 150 000 runs (two runs of
// 2.5 and 3 minutes on 2 cores) after that check.
//
// The NetCDF-4 (HDF5) path has no such cheap check. With
// COLBRIDGE_FUZZ_HDF5=1, FuzzOpen crashes netCDF-C 4.9.0 / HDF5 1.10.8
// within a minute by changing one to five bytes of a valid file: SIGSEGV
// in nc_open and nc_inq_varname, an abort in nc_inq_natts, an endless loop
// inside HDF5 in nc_open. ncdump crashes or hangs on the same files (kept
// in testdata/crashers). One crash is avoided: nc_close after a failed
// metadata load frees an invalid pointer, so such a handle is left open (a
// small leak) instead. Treat NetCDF-4 files from untrusted sources
// accordingly: open them in a child process if a crash must not take the
// caller down.
package ncio
