package ncio

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// Format is the on-disk format of a new file.
type Format int

const (
	// NetCDF4 is the HDF5-based format: every Type, several unlimited
	// dimensions, deflate, chunking, String attributes. The default.
	NetCDF4 Format = iota
	// Classic64 is the classic 64-bit offset format ("CDF\x02"): types
	// Int8, Char, Int16, Int32, Float32, Float64 only, at most one
	// unlimited dimension, no compression or chunking.
	Classic64
)

// CreateOptions configures Create. The zero value gives a NetCDF-4 file.
type CreateOptions struct {
	Format Format
	// NoSync skips the fsync of the file and of its directory in Commit: the file still
	// appears only when complete (the rename), but after a power failure (not a crash of
	// the program) its name may survive with its data lost. Parallel file systems make
	// fsync expensive; batch jobs that rerun on failure may prefer speed.
	NoSync bool
}

// Writer writes a new NetCDF file under a temporary name in the target's
// directory and moves it into place only on Commit, so no reader ever sees
// half a file under the final name.
//
// A Writer starts in define mode (DefDim, DefVar, PutAttr*, SetDeflate,
// SetChunking); EndDef switches to data mode (Write*). Errors are sticky,
// as with bufio.Writer: after the first failed call every later call
// returns that same error, and Commit returns it and deletes the
// temporary file. Commit or Abort ends the Writer; Abort after either is a
// no-op, so `defer w.Abort()` is the usual guard. All methods are safe for
// concurrent use.
type Writer struct {
	path   string // final name
	tmp    string
	format Format
	noSync bool
	failAt int // write call number that fails (InjectWriteFault); 0 never

	// Only the I/O goroutine touches the fields below.
	ncid   int
	define bool
	done   bool
	err    error
	writes int
	dims   []wdim
	vars   map[string]*wvar
}

type wdim struct {
	name      string
	len       int // records written so far, for an unlimited dimension
	unlimited bool
}

type wvar struct {
	name string
	id   int
	typ  Type
	dims []int // indices into Writer.dims
}

// writeFault holds the armed fault injection (0: none; k+1: fail write k+1).
var writeFault atomic.Int64

// InjectWriteFault is for tests. Until restore is called, every Writer
// created makes its data write call number after+1 (counting WriteFloat64s,
// WriteFloat32s, WriteInt32s and WriteInt64s calls on that Writer) fail
// with an error matching ErrInjected, as a full disk would. It lets a
// package check that a mid-file write error leaves no output. Tests that
// use it must not run in parallel with other tests that create Writers.
func InjectWriteFault(after int) (restore func()) {
	if after < 0 {
		panic("ncio: InjectWriteFault: negative count")
	}
	writeFault.Store(int64(after) + 1)
	return func() { writeFault.Store(0) }
}

// Create starts a new file that will appear at path on Commit. The data
// goes to "<dir>/.<base>.tmp-<16 hex digits>" meanwhile, created with
// NOCLOBBER so that no existing file is ever overwritten before Commit.
// An existing file at path is replaced atomically by Commit.
func Create(path string, opts CreateOptions) (*Writer, error) {
	w := &Writer{path: path, format: opts.Format, noSync: opts.NoSync, define: true, vars: make(map[string]*wvar)}
	if strings.IndexByte(path, 0) >= 0 {
		return nil, w.errorf("create", "", "", ErrInvalid, "path contains a NUL byte", nil)
	}
	base := filepath.Base(path)
	if base == "." || base == ".." || base == string(filepath.Separator) || strings.HasSuffix(path, string(filepath.Separator)) {
		return nil, w.errorf("create", "", "", ErrInvalid, "path names a directory, not a file", nil)
	}
	var mode netcdf.FileMode
	switch opts.Format {
	case NetCDF4:
		mode = netcdf.NETCDF4
	case Classic64:
		mode = netcdf.OFFSET_64BIT
	default:
		return nil, w.errorf("create", "", "", ErrInvalid, fmt.Sprintf("unknown format %d", opts.Format), nil)
	}
	dir := filepath.Dir(path)
	if st, err := os.Stat(dir); err != nil {
		return nil, w.errorf("create", "", "", nil, "directory "+dir, unwrapPathError(err))
	} else if !st.IsDir() {
		return nil, w.errorf("create", "", "", ErrInvalid, dir+" is not a directory", nil)
	}
	w.tmp = filepath.Join(dir, fmt.Sprintf(".%s.tmp-%016x", base, rand.Uint64()))
	w.failAt = int(writeFault.Load())
	var err error
	run(func() {
		ds, e := netcdf.CreateFile(w.tmp, mode|netcdf.NOCLOBBER)
		if e != nil {
			err = w.errorf("create", "", "", nil, "", wrapLib(e))
			return
		}
		w.ncid = int(ds)
	})
	if err != nil {
		return nil, err
	}
	return w, nil
}

// Path returns the final path, where the file appears on Commit.
func (w *Writer) Path() string { return w.path }

func (w *Writer) errorf(op, varName, attrName string, kind error, msg string, cause error) error {
	return &Error{Op: op, Path: w.path, Var: varName, Attr: attrName, Kind: kind, Msg: msg, Err: cause}
}

// do runs fn on the I/O goroutine with the Writer's state checks: ended
// Writers give ErrClosed, broken ones their first error, and define-mode
// calls need define mode (wantDefine) and data calls data mode.
func (w *Writer) do(op, varName string, wantDefine bool, fn func() error) error {
	var err error
	run(func() {
		switch {
		case w.done:
			err = w.errorf(op, varName, "", ErrClosed, "writer already committed or aborted", nil)
			return
		case w.err != nil:
			err = w.err
			return
		case wantDefine && !w.define:
			err = w.errorf(op, varName, "", ErrState, "not in define mode (EndDef was called)", nil)
		case !wantDefine && w.define:
			err = w.errorf(op, varName, "", ErrState, "still in define mode (call EndDef first)", nil)
		default:
			err = fn()
		}
		if err != nil {
			w.err = err
		}
	})
	return err
}

func checkName(what, name string) (kind error, msg string) {
	if name == "" {
		return ErrInvalid, "empty " + what + " name"
	}
	if strings.IndexByte(name, 0) >= 0 {
		return ErrInvalid, what + " name contains a NUL byte"
	}
	return nil, ""
}

// DefDim defines a dimension of length n; n == 0 makes it unlimited (the
// record dimension; Classic64 allows one).
func (w *Writer) DefDim(name string, n int) error {
	return w.do("define", "", true, func() error {
		if kind, msg := checkName("dimension", name); kind != nil {
			return w.errorf("define", "", "", kind, msg, nil)
		}
		if n < 0 {
			return w.errorf("define", "", "", ErrInvalid, fmt.Sprintf("dimension %s: negative length %d", quote(name), n), nil)
		}
		if _, err := netcdf.Dataset(w.ncid).AddDim(name, uint64(n)); err != nil {
			return w.errorf("define", "", "", nil, fmt.Sprintf("dimension %s", quote(name)), wrapLib(err))
		}
		w.dims = append(w.dims, wdim{name: name, unlimited: n == 0, len: n})
		return nil
	})
}

// DefVar defines a numeric variable of type t over the named dimensions
// (slowest-varying first; none for a scalar). Char and String variables are
// not supported (ErrType).
func (w *Writer) DefVar(name string, t Type, dims []string) error {
	return w.do("define", name, true, func() error {
		if kind, msg := checkName("variable", name); kind != nil {
			return w.errorf("define", name, "", kind, msg, nil)
		}
		if !t.IsNumeric() {
			return w.errorf("define", name, "", ErrType, fmt.Sprintf("type %s is not supported for variables", t), nil)
		}
		ds := netcdf.Dataset(w.ncid)
		v := &wvar{name: name, typ: t}
		nds := make([]netcdf.Dim, len(dims))
		for i, dn := range dims {
			k := w.dimIndex(dn)
			if k < 0 {
				return w.errorf("define", name, "", ErrNotFound, fmt.Sprintf("dimension %s not defined", quote(dn)), nil)
			}
			d, err := ds.Dim(dn)
			if err != nil {
				return w.errorf("define", name, "", nil, fmt.Sprintf("dimension %s", quote(dn)), wrapLib(err))
			}
			nds[i] = d
			v.dims = append(v.dims, k)
		}
		if _, err := ds.AddVar(name, netcdf.Type(t), nds); err != nil {
			return w.errorf("define", name, "", nil, "", wrapLib(err))
		}
		id, err := varID(w.ncid, name)
		if err != nil {
			return w.errorf("define", name, "", nil, "", err)
		}
		v.id = id
		w.vars[name] = v
		return nil
	})
}

func (w *Writer) dimIndex(name string) int {
	for i, d := range w.dims {
		if d.name == name {
			return i
		}
	}
	return -1
}

// variable looks up a defined variable; "" is allowed (global) only when
// global is set. Runs on the I/O goroutine.
func (w *Writer) variable(op, name string, global bool) (*wvar, int, error) {
	if name == "" && global {
		return nil, globalID, nil
	}
	v, ok := w.vars[name]
	if !ok {
		return nil, 0, w.errorf(op, name, "", ErrNotFound, "variable not defined", nil)
	}
	return v, v.id, nil
}

// SetDeflate turns on zlib compression at level 1..9 (0 turns it off) for
// a variable, with the byte shuffle filter if shuffle is set. NetCDF4 only.
func (w *Writer) SetDeflate(varName string, level int, shuffle bool) error {
	return w.do("define", varName, true, func() error {
		if _, _, err := w.variable("define", varName, false); err != nil {
			return err
		}
		if w.format != NetCDF4 {
			return w.errorf("define", varName, "", ErrInvalid, "compression needs the NetCDF-4 format", nil)
		}
		if level < 0 || level > 9 {
			return w.errorf("define", varName, "", ErrInvalid, fmt.Sprintf("deflate level %d not in 0..9", level), nil)
		}
		nv, err := netcdf.Dataset(w.ncid).Var(varName)
		if err == nil {
			err = nv.SetCompression(shuffle, level > 0, level)
		}
		if err != nil {
			return w.errorf("define", varName, "", nil, "setting deflate", wrapLib(err))
		}
		return nil
	})
}

// SetChunking stores a variable in chunks of the given lengths, one per
// dimension (each at least 1 and, for fixed dimensions, at most the
// dimension's length). NetCDF4 only; scalars cannot be chunked.
func (w *Writer) SetChunking(varName string, chunks []int) error {
	return w.do("define", varName, true, func() error {
		v, id, err := w.variable("define", varName, false)
		if err != nil {
			return err
		}
		if w.format != NetCDF4 {
			return w.errorf("define", varName, "", ErrInvalid, "chunking needs the NetCDF-4 format", nil)
		}
		if len(v.dims) == 0 || len(chunks) != len(v.dims) {
			return w.errorf("define", varName, "", ErrInvalid, fmt.Sprintf("%d chunk lengths for %d dimensions", len(chunks), len(v.dims)), nil)
		}
		for i, c := range chunks {
			d := w.dims[v.dims[i]]
			if c < 1 || (!d.unlimited && c > d.len) {
				return w.errorf("define", varName, "", ErrInvalid, fmt.Sprintf("chunk length %d for dimension %s (length %d)", c, quote(d.name), d.len), nil)
			}
		}
		if err := defChunking(w.ncid, id, chunks); err != nil {
			return w.errorf("define", varName, "", nil, "setting chunking", err)
		}
		return nil
	})
}

// typedAttrs are the attributes that the NetCDF Users Guide ("Attribute
// Conventions") and CF (§2.5.1) require to have the variable's own type.
var typedAttrs = map[string]bool{
	"_FillValue": true, "missing_value": true, "valid_min": true, "valid_max": true, "valid_range": true,
}

// PutAttrText sets a text (Char) attribute; varName "" sets a global one.
func (w *Writer) PutAttrText(varName, name, value string) error {
	return w.putAttr(varName, name, func(id int) error {
		b := append([]byte(value), 0) // a valid pointer even for ""
		return putAtt(w.ncid, id, name, Char, len(value), unsafe.Pointer(&b[0]))
	})
}

// PutAttrStrings sets an attribute of NetCDF-4 String type (several
// strings are allowed). Classic64 files refuse it with the library's error.
func (w *Writer) PutAttrStrings(varName, name string, values ...string) error {
	return w.putAttr(varName, name, func(id int) error {
		for _, s := range values {
			if strings.IndexByte(s, 0) >= 0 {
				return w.errorf("define", varName, name, ErrInvalid, "string value contains a NUL byte", nil)
			}
		}
		return putAttStrings(w.ncid, id, name, values)
	})
}

// PutAttrFloat64s sets a numeric attribute stored as Float64 (double),
// except that _FillValue, missing_value, valid_min, valid_max and
// valid_range on a variable are stored in the variable's own type, as the
// NetCDF and CF conventions require; a value that does not convert exactly
// to an integer type (or overflows float32) gives ErrRange.
func (w *Writer) PutAttrFloat64s(varName, name string, values ...float64) error {
	return putNumAttr(w, varName, name, values)
}

// PutAttrInt32s is PutAttrFloat64s for values stored as Int32 (int).
func (w *Writer) PutAttrInt32s(varName, name string, values ...int32) error {
	return putNumAttr(w, varName, name, values)
}

// PutAttrInt64s is PutAttrFloat64s for values stored as Int64 (NetCDF4
// only, unless the attribute takes the variable's type).
func (w *Writer) PutAttrInt64s(varName, name string, values ...int64) error {
	return putNumAttr(w, varName, name, values)
}

func putNumAttr[T number](w *Writer, varName, name string, values []T) error {
	return w.putAttr(varName, name, func(id int) error {
		t := typeOf[T]()
		if v := w.vars[varName]; varName != "" && typedAttrs[name] {
			t = v.typ
		}
		buf := make([]uint64, (len(values)*t.size()+7)/8+1)
		p := unsafe.Pointer(&buf[0])
		if bad, _ := toStored(t, p, values); bad >= 0 {
			return w.errorf("define", varName, name, ErrRange, fmt.Sprintf("value %s does not fit %s", valueString(values[bad]), t), nil)
		}
		return putAtt(w.ncid, id, name, t, len(values), p)
	})
}

func (w *Writer) putAttr(varName, name string, put func(id int) error) error {
	return w.do("define", varName, true, func() error {
		_, id, err := w.variable("define", varName, true)
		if err != nil {
			return err
		}
		if kind, msg := checkName("attribute", name); kind != nil {
			return w.errorf("define", varName, "", kind, msg, nil)
		}
		if err := put(id); err != nil {
			if _, ok := err.(*Error); ok {
				return err
			}
			return w.errorf("define", varName, name, nil, "", err)
		}
		return nil
	})
}

// EndDef ends define mode; the Write methods work only after it.
func (w *Writer) EndDef() error {
	return w.do("define", "", true, func() error {
		if err := netcdf.Dataset(w.ncid).EndDef(); err != nil {
			return w.errorf("define", "", "", nil, "leaving define mode", wrapLib(err))
		}
		w.define = false
		return nil
	})
}

// Commit finishes the file: it closes it (the library flushes its
// buffers), fsyncs it, renames it to the final path (atomic within one
// directory on POSIX file systems) and fsyncs the directory so the new
// name survives a crash. If the Writer had failed before, or any of these
// steps fails before the rename, the temporary file is removed and nothing
// appears at the final path. Commit in define mode ends it first.
func (w *Writer) Commit() error {
	var err error
	run(func() {
		if w.done {
			err = w.errorf("commit", "", "", ErrClosed, "writer already committed or aborted", nil)
			return
		}
		w.done = true
		ds := netcdf.Dataset(w.ncid)
		if w.err != nil {
			ds.Close()
			os.Remove(w.tmp)
			err = w.err
			return
		}
		if e := ds.Close(); e != nil {
			os.Remove(w.tmp)
			err = w.errorf("commit", "", "", nil, "closing "+w.tmp, wrapLib(e))
		}
	})
	if err != nil {
		return err
	}
	if !w.noSync {
		if e := syncPath(w.tmp); e != nil {
			os.Remove(w.tmp)
			return w.errorf("commit", "", "", nil, "syncing "+w.tmp, unwrapPathError(e))
		}
	}
	if e := os.Rename(w.tmp, w.path); e != nil {
		os.Remove(w.tmp)
		return w.errorf("commit", "", "", nil, "renaming "+w.tmp, e)
	}
	if w.noSync {
		return nil
	}
	if e := syncPath(filepath.Dir(w.path)); e != nil {
		return w.errorf("commit", "", "", nil, "file written, but syncing its directory failed", unwrapPathError(e))
	}
	return nil
}

func syncPath(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	err = f.Sync()
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	return err
}

// Abort closes and deletes the temporary file. It does nothing (and
// returns nil) after Commit or a previous Abort, so it is safe to defer.
func (w *Writer) Abort() error {
	var err error
	run(func() {
		if w.done {
			return
		}
		w.done = true
		netcdf.Dataset(w.ncid).Close() // errors do not matter: the file goes
		if e := os.Remove(w.tmp); e != nil && !os.IsNotExist(e) {
			err = w.errorf("abort", "", "", nil, "", e)
		}
	})
	return err
}
