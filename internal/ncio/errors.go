package ncio

import (
	"errors"
	"strings"
	"syscall"
)

// Kinds of failure, for errors.Is. Every error returned by this package is
// an *Error that wraps one of these (or an error of the operating system,
// or a *LibError, or both).
var (
	// ErrNotFound: no variable, dimension or attribute of that name.
	ErrNotFound = errors.New("not found")
	// ErrBounds: start/count do not fit the variable's shape.
	ErrBounds = errors.New("out of bounds")
	// ErrType: the stored type cannot be converted to the one asked for
	// (text to numbers, or a type this package does not handle).
	ErrType = errors.New("type mismatch")
	// ErrRange: a value does not fit the destination type exactly (an
	// integer destination needs an integral value in range; a float32
	// destination a value below its overflow threshold).
	ErrRange = errors.New("value out of range")
	// ErrFormat: the file is not NetCDF, or is damaged.
	ErrFormat = errors.New("not a valid NetCDF file")
	// ErrClosed: the File was closed, or the Writer committed or aborted.
	ErrClosed = errors.New("already closed")
	// ErrState: the call is not allowed in the Writer's current mode
	// (define mode versus data mode).
	ErrState = errors.New("wrong mode")
	// ErrInvalid: a bad argument (negative length, name with a NUL byte...).
	ErrInvalid = errors.New("invalid argument")
	// ErrInjected: the failure injected by InjectWriteFault (tests only).
	ErrInjected = errors.New("injected write fault")
)

// Error is the error type of this package. Its message has the form
//
//	<op> <path>: [variable "<var>": ][attribute "<attr>": ]<problem>[: <cause>]
//
// for example
//
//	read /data/x.nc: variable "u": start+count exceeds dimension "nCells" (length 24)
//	open /data/y.nc: NetCDF: Unknown file format
//
// Var is empty for file-level problems; a global attribute has Var "" and
// Attr set.
type Error struct {
	Op   string // "open", "read", "create", "define", "write", "commit" ...
	Path string // the file as the caller named it (the final name for a Writer)
	Var  string // the variable, if any
	Attr string // the attribute, if any
	Kind error  // one of the Err* values above, or nil
	Msg  string // what went wrong, in words; may be empty
	Err  error  // the cause: *LibError, an os error, or nil
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.Op)
	b.WriteByte(' ')
	b.WriteString(e.Path)
	b.WriteString(": ")
	if e.Var != "" {
		b.WriteString("variable ")
		b.WriteString(quote(e.Var))
		b.WriteString(": ")
	}
	if e.Attr != "" {
		b.WriteString("attribute ")
		b.WriteString(quote(e.Attr))
		b.WriteString(": ")
	}
	switch {
	case e.Msg != "" && e.Err != nil:
		b.WriteString(e.Msg)
		b.WriteString(": ")
		b.WriteString(e.Err.Error())
	case e.Msg != "":
		b.WriteString(e.Msg)
	case e.Err != nil:
		b.WriteString(e.Err.Error())
	case e.Kind != nil:
		b.WriteString(e.Kind.Error())
	default:
		b.WriteString("failed")
	}
	return b.String()
}

// Unwrap returns the kind and the cause, so errors.Is(err, ErrNotFound) and
// errors.As(err, &libErr) both work.
func (e *Error) Unwrap() []error {
	var out []error
	if e.Kind != nil {
		out = append(out, e.Kind)
	}
	if e.Err != nil {
		out = append(out, e.Err)
	}
	return out
}

// LibError is a status code from the NetCDF C library with its nc_strerror
// text. Negative codes are the library's own (netcdf.h NC_E*); positive ones
// are operating-system errno values, which Unwrap returns as syscall.Errno
// so that errors.Is(err, fs.ErrNotExist) works.
type LibError struct {
	Code int
	Msg  string
}

func (e *LibError) Error() string { return e.Msg }

// Unwrap maps a few library codes to this package's kinds and positive
// codes to syscall.Errno.
func (e *LibError) Unwrap() error {
	if e.Code > 0 {
		return syscall.Errno(e.Code)
	}
	switch e.Code {
	case -49, -43, -46: // NC_ENOTVAR, NC_ENOTATT, NC_EBADDIM
		return ErrNotFound
	case -40, -57: // NC_EINVALCOORDS, NC_EEDGE
		return ErrBounds
	case -51, -64, -101: // NC_ENOTNC, NC_ETRUNC, NC_EHDFERR
		return ErrFormat
	case -60: // NC_ERANGE
		return ErrRange
	case -56, -45: // NC_ECHAR, NC_EBADTYPE
		return ErrType
	case -39, -38: // NC_EINDEFINE, NC_ENOTINDEFINE
		return ErrState
	}
	return nil
}

// quote writes s in double quotes, escaping only what would make the
// message ambiguous (quotes, backslashes and control characters).
func quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		switch {
		case r == '"' || r == '\\':
			b.WriteByte('\\')
			b.WriteRune(r)
		case r < 0x20 || r == 0x7f:
			b.WriteString(`\x`)
			b.WriteByte("0123456789abcdef"[r>>4])
			b.WriteByte("0123456789abcdef"[r&15])
		default:
			b.WriteRune(r)
		}
	}
	b.WriteByte('"')
	return b.String()
}
