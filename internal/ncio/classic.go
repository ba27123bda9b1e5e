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
		if n := h.int64("numrecs"); n < 0 && n != -1 {
			h.fail("negative numrecs %d", n)
		}
	} else if n := h.int32("numrecs"); n < 0 && n != -1 {
		h.fail("negative numrecs %d", n)
	}
	// dim_list: each dim is at least a name (4+4 bytes) and a length.
	h.ndims = h.list(0x0A, "dimension", 8+h.word())
	unlimited := 0
	for range h.ndims {
		h.name("dimension")
		if h.nonNeg("dimension length") == 0 {
			unlimited++
		}
	}
	if unlimited > 1 {
		h.fail("%d record dimensions, the format allows one", unlimited)
	}
	h.attrs()
	// var_list: name, rank, vatt_list, type, vsize, begin.
	nvars := h.list(0x0B, "variable", 8+h.word()+8+4+h.word()+4)
	for range nvars {
		h.name("variable")
		rank := h.nonNeg("variable rank")
		if rank > 1024 { // NC_MAX_VAR_DIMS
			h.fail("variable rank %d exceeds 1024", rank)
		}
		h.need(rank*h.word(), "dimension ids")
		for range rank {
			if id := h.nonNeg("dimension id"); id >= h.ndims {
				h.fail("dimension id %d, file has %d dimensions", id, h.ndims)
			}
		}
		h.attrs()
		h.typ()
		h.nonNeg("vsize")
		var begin int64
		if h.version == 1 {
			begin = h.int32("begin")
		} else {
			begin = h.int64("begin")
		}
		if begin < 0 || begin > h.size {
			h.fail("variable data begins at %d, beyond the file's %d bytes", begin, h.size)
		}
	}
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

// name reads a name: length, bytes, padding to 4.
func (h *classicHeader) name(what string) {
	n := h.nonNeg(what + " name length")
	if n == 0 || n > 256 { // NC_MAX_NAME
		h.fail("%s name length %d not in 1..256", what, n)
	}
	h.skip(pad4(n), what+" name")
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
