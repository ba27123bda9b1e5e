package ncio

import "strconv"

// Type is a NetCDF external data type. The values are the nc_type codes of
// netcdf.h, so they match what the C library and ncdump report.
type Type int

// The NetCDF data types. Char and String hold text; the rest are numbers.
// The classic formats know only Int8, Char, Int16, Int32, Float32, Float64.
const (
	Int8    Type = 1  // NC_BYTE, CDL "byte"
	Char    Type = 2  // NC_CHAR, CDL "char"
	Int16   Type = 3  // NC_SHORT, CDL "short"
	Int32   Type = 4  // NC_INT, CDL "int"
	Float32 Type = 5  // NC_FLOAT, CDL "float"
	Float64 Type = 6  // NC_DOUBLE, CDL "double"
	Uint8   Type = 7  // NC_UBYTE, CDL "ubyte"
	Uint16  Type = 8  // NC_USHORT, CDL "ushort"
	Uint32  Type = 9  // NC_UINT, CDL "uint"
	Int64   Type = 10 // NC_INT64, CDL "int64"
	Uint64  Type = 11 // NC_UINT64, CDL "uint64"
	String  Type = 12 // NC_STRING, CDL "string"
)

var typeNames = [...]string{
	Int8: "byte", Char: "char", Int16: "short", Int32: "int", Float32: "float",
	Float64: "double", Uint8: "ubyte", Uint16: "ushort", Uint32: "uint",
	Int64: "int64", Uint64: "uint64", String: "string",
}

// String returns the CDL name of t ("float", "int64" ...), or "type(N)" for
// a type this package does not know (user-defined NetCDF-4 types).
func (t Type) String() string {
	if t > 0 && int(t) < len(typeNames) {
		return typeNames[t]
	}
	return "type(" + strconv.Itoa(int(t)) + ")"
}

// IsNumeric reports whether t holds numbers (every known type but Char and String).
func (t Type) IsNumeric() bool {
	return t.size() > 0 && t != Char
}

// size returns the size in bytes of one value of t in memory, 0 for String
// and unknown types.
func (t Type) size() int {
	switch t {
	case Int8, Uint8, Char:
		return 1
	case Int16, Uint16:
		return 2
	case Int32, Uint32, Float32:
		return 4
	case Float64, Int64, Uint64:
		return 8
	}
	return 0
}
