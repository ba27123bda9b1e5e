package ncio

import (
	"bytes"
	"fmt"
	"io"
	"os"
)

// Signatures that open a file the C library can read (NetCDF Users Guide,
// "File Format Specifications"; HDF5 File Format Specification, "Format
// Signature"): classic "CDF\x01", 64-bit offset "CDF\x02", CDF-5
// "CDF\x05", and NetCDF-4, which is HDF5 with its 8-byte signature at
// offset 0 or after a user block of 512, 1024, 2048 ... bytes.
var (
	cdfMagic  = []byte("CDF")
	hdf5Magic = []byte("\x89HDF\r\n\x1a\n")
)

// sniff checks that the file at path starts like a NetCDF file before the
// C library sees it: anything else (empty files, directories, text, Zarr
// stores, URLs) gets ErrFormat here. It returns the file size and
// whether the file is HDF5 (NetCDF-4).
func sniff(path string) (size int64, hdf5 bool, kind error, msg string, cause error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, false, nil, "", unwrapPathError(err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return 0, false, nil, "", unwrapPathError(err)
	}
	if st.IsDir() {
		return 0, false, ErrFormat, "is a directory, not a NetCDF file", nil
	}
	size = st.Size()
	var head [8]byte
	n, err := io.ReadFull(f, head[:])
	if err != nil && err != io.ErrUnexpectedEOF && err != io.EOF {
		return 0, false, nil, "", unwrapPathError(err)
	}
	if n >= 4 && bytes.Equal(head[:3], cdfMagic) {
		switch head[3] {
		case 1, 2, 5:
			if size < minClassicSize {
				return 0, false, ErrFormat, fmt.Sprintf("truncated: %d bytes, a classic header needs at least %d", size, minClassicSize), nil
			}
			if _, err := f.Seek(0, io.SeekStart); err != nil {
				return 0, false, nil, "", unwrapPathError(err)
			}
			if msg := checkClassic(f, size); msg != "" {
				return 0, false, ErrFormat, msg, nil
			}
			return size, false, nil, "", nil
		}
		return 0, false, ErrFormat, fmt.Sprintf("unknown classic format version %d", head[3]), nil
	}
	for off := int64(0); off+8 <= size; off = max(512, 2*off) {
		if off > 0 {
			if _, err := f.ReadAt(head[:], off); err != nil {
				break
			}
		}
		if bytes.Equal(head[:], hdf5Magic) {
			return size, true, nil, "", nil
		}
	}
	return 0, false, ErrFormat, "no NetCDF or HDF5 signature", nil
}

// minClassicSize is the smallest classic header: magic (4 bytes), numrecs
// (4), and three absent lists (8 each) — NetCDF Users Guide, classic format
// grammar.
const minClassicSize = 4 + 4 + 3*8

// unwrapPathError drops the *os.PathError wrapper (its path is already in
// our message) but keeps the errno for errors.Is.
func unwrapPathError(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}
