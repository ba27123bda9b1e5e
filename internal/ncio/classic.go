package ncio

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"os"
)

// checkClassic walks the header of a classic, 64-bit offset or CDF-5 file
// and checks its structure before the C library reads it: netCDF-C 4.9.0
// trusts the counts in the header and crashes (SIGSEGV) on a header that
// claims, say, 1.6e9 dimensions in a 326-byte file (found by FuzzOpen).
//
// The grammar is that of the NetCDF Users Guide, "The NetCDF Classic
// Format Specification"; CDF-5 (version byte 5, from the PnetCDF CDF-5
// format note, from memory) widens NON_NEG counts, dimension lengths,
// dimension ids, vsize and begin to 64 bits and adds the types 7..11.
// The walk reads only the header; every count is checked against the
// bytes left in the file before it is used, so its cost is bounded by the
// header size.
func checkClassic(f *os.File, size int64) (msg string) {
	h := classicHeader{r: bufio.NewReaderSize(f, 64<<10), size: size}
	defer func() {
		if p := recover(); p != nil {
			if hp, ok := p.(headerProblem); ok {
				msg = string(hp)
				return
			}
			panic(p)
		}
	}()
	h.walk()
	return ""
}

type headerProblem string

type classicHeader struct {
	r       *bufio.Reader
	pos     int64 // bytes consumed
	size    int64 // file size
	version byte
	ndims   int64
	numrecs int64   // -1 for STREAMING
	dimLen  []int64 // dimension lengths, 0 for the record dimension
	recDim  int64   // id of the record dimension, -1 if none
}

// classicVar is what the extent check needs of a variable.
type classicVar struct {
	name   string
	dims   []int64
	size   int64 // bytes per value
	begin  int64
	record bool
}

func (h *classicHeader) fail(format string, args ...any) {
	panic(headerProblem(fmt.Sprintf("classic header at byte %d: ", h.pos) + fmt.Sprintf(format, args...)))
}

// need fails unless n more bytes are in the file.
func (h *classicHeader) need(n int64, what string) {
	if n < 0 || n > h.size-h.pos {
		h.fail("%s needs %d bytes, file has %d left (truncated or corrupt)", what, n, h.size-h.pos)
	}
}

func (h *classicHeader) read(n int, what string) []byte {
	h.need(int64(n), what)
	var b [8]byte
	if _, err := io.ReadFull(h.r, b[:n]); err != nil {
		h.fail("reading %s: %v", what, err)
	}
	h.pos += int64(n)
	return b[:n]
}

func (h *classicHeader) skip(n int64, what string) {
	h.need(n, what)
	if _, err := h.r.Discard(int(n)); err != nil {
		h.fail("reading %s: %v", what, err)
	}
	h.pos += n
}

func (h *classicHeader) int32(what string) int64 {
	return int64(int32(binary.BigEndian.Uint32(h.read(4, what))))
}

func (h *classicHeader) int64(what string) int64 {
	return int64(binary.BigEndian.Uint64(h.read(8, what)))
}

// nonNeg reads a NON_NEG: INT, or INT64 in CDF-5.
func (h *classicHeader) nonNeg(what string) int64 {
	var v int64
	if h.version == 5 {
		v = h.int64(what)
	} else {
		v = h.int32(what)
	}
	if v < 0 {
		h.fail("negative %s %d", what, v)
	}
	return v
}

func (h *classicHeader) walk() {
	h.skip(3, "magic")
	h.version = h.read(1, "version")[0]
	// numrecs: NON_NEG or STREAMING (all bits set).
	if h.version == 5 {
		h.numrecs = h.int64("numrecs")
	} else {
		h.numrecs = h.int32("numrecs")
	}
	if h.numrecs < -1 {
		h.fail("negative numrecs %d", h.numrecs)
	}
	// dim_list: each dim is at least a name (4+4 bytes) and a length.
	h.ndims = h.list(0x0A, "dimension", 8+h.word())
	unlimited := 0
	h.recDim = -1
	for id := range h.ndims {
		h.name("dimension")
		n := h.nonNeg("dimension length")
		if n == 0 {
			unlimited++
			h.recDim = id
		}
		h.dimLen = append(h.dimLen, n)
	}
	if unlimited > 1 {
		h.fail("%d record dimensions, the format allows one", unlimited)
	}
	h.attrs()
	// var_list: name, rank, vatt_list, type, vsize, begin.
	nvars := h.list(0x0B, "variable", 8+h.word()+8+4+h.word()+4)
	vars := make([]classicVar, 0, nvars)
	for range nvars {
		var v classicVar
		v.name = h.name("variable")
		rank := h.nonNeg("variable rank")
		if rank > 1024 { // NC_MAX_VAR_DIMS
			h.fail("variable rank %d exceeds 1024", rank)
		}
		h.need(rank*h.word(), "dimension ids")
		for i := range rank {
			id := h.nonNeg("dimension id")
			if id >= h.ndims {
				h.fail("dimension id %d, file has %d dimensions", id, h.ndims)
			}
			if id == h.recDim {
				if i != 0 {
					h.fail("variable %q uses the record dimension in position %d, only 0 is allowed", v.name, i)
				}
				v.record = true
				continue
			}
			v.dims = append(v.dims, h.dimLen[id])
		}
		h.attrs()
		v.size = h.typ()
		h.nonNeg("vsize")
		var begin int64
		if h.version == 1 {
			begin = h.int32("begin")
		} else {
			begin = h.int64("begin")
		}
		if begin < 0 || begin > h.size {
			h.fail("variable %q: data begins at %d, beyond the file's %d bytes", v.name, begin, h.size)
		}
		v.begin = begin
		vars = append(vars, v)
	}
	h.checkExtents(vars)
}

// checkExtents checks that the file holds every variable's data, so that a
// truncated file is refused: the library would read zeros past its end
// without an error. netCDF-C pads the files it writes to this full size
// when it closes them, even in no-fill mode.
func (h *classicHeader) checkExtents(vars []classicVar) {
	// Bytes of one record of each record variable; recsize is their sum,
	// each padded to 4 bytes unless there is only one (NUG, "Note on padding").
	var recsize int64
	nrec := 0
	slab := make([]int64, len(vars))
	for i, v := range vars {
		n := v.size
		for _, l := range v.dims {
			n = h.mul(n, l, v.name)
		}
		slab[i] = n
		if v.record {
			recsize += pad4(n)
			nrec++
		}
	}
	if nrec == 1 {
		for i, v := range vars {
			if v.record {
				recsize = slab[i]
			}
		}
	}
	for i, v := range vars {
		end := v.begin + slab[i]
		if v.record {
			if h.numrecs <= 0 || slab[i] == 0 {
				continue // no records, or STREAMING (length unknown)
			}
			end = v.begin + h.mul(h.numrecs-1, recsize, v.name) + slab[i]
		}
		if slab[i] > 0 && (end < v.begin || end > h.size) {
			h.fail("variable %q: data ends at byte %d, the file has %d (truncated)", v.name, end, h.size)
		}
	}
}

// mul multiplies non-negative sizes, failing on overflow.
func (h *classicHeader) mul(a, b int64, name string) int64 {
	if a != 0 && b > math.MaxInt64/a {
		h.fail("variable %q: size overflows", name)
	}
	return a * b
}

// word is the size of NON_NEG: 4, or 8 in CDF-5.
func (h *classicHeader) word() int64 {
	if h.version == 5 {
		return 8
	}
	return 4
}

// list reads a list header (ABSENT or tag + nelems) and checks that
// nelems entries of at least minEntry bytes fit in the file.
func (h *classicHeader) list(tag int64, what string, minEntry int64) int64 {
	t := h.int32(what + " list tag")
	n := h.nonNeg(what + " count")
	if t == 0 && n == 0 {
		return 0
	}
	if t != tag {
		h.fail("bad %s list tag %#x", what, t)
	}
	if n > (h.size-h.pos)/minEntry {
		h.fail("%d %ss cannot fit in the %d bytes left", n, what, h.size-h.pos)
	}
	return n
}

// name reads a name (length, bytes, padding to 4) and returns it.
func (h *classicHeader) name(what string) string {
	n := h.nonNeg(what + " name length")
	if n == 0 || n > 256 { // NC_MAX_NAME
		h.fail("%s name length %d not in 1..256", what, n)
	}
	h.need(pad4(n), what+" name")
	b := make([]byte, pad4(n))
	if _, err := io.ReadFull(h.r, b); err != nil {
		h.fail("reading %s name: %v", what, err)
	}
	h.pos += pad4(n)
	return string(b[:n])
}

func (h *classicHeader) attrs() {
	n := h.list(0x0C, "attribute", 8+4+h.word())
	for range n {
		h.name("attribute")
		sz := h.typ()
		count := h.nonNeg("attribute length")
		if count > math.MaxInt64/8 {
			h.fail("attribute length %d", count)
		}
		h.skip(pad4(count*sz), "attribute values")
	}
}

// typ reads an nc_type and returns its size in bytes.
func (h *classicHeader) typ() int64 {
	t := Type(h.int32("type"))
	maxType := Float64
	if h.version == 5 {
		maxType = Uint64
	}
	if t < Int8 || t > maxType {
		h.fail("type code %d not allowed in this format", t)
	}
	return int64(t.size())
}

func pad4(n int64) int64 { return (n + 3) &^ 3 }
