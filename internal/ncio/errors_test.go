package ncio

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// smallFile writes a file with u(nCells=24) float64 and s, a scalar, and
// returns its path.
func smallFile(t *testing.T) string {
	t.Helper()
	p := tempFile(t, "x.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("nCells", 24))
	check(t, w.DefDim("nLev", 3))
	check(t, w.DefVar("u", Float64, []string{"nCells"}))
	check(t, w.DefVar("t", Float32, []string{"nCells", "nLev"}))
	check(t, w.DefVar("s", Int32, nil))
	check(t, w.EndDef())
	u := make([]float64, 24)
	for i := range u {
		u[i] = float64(i)
	}
	check(t, w.WriteFloat64s("u", nil, nil, u))
	check(t, w.WriteInt32s("s", nil, nil, []int32{5}))
	check(t, w.Commit())
	return p
}

// TestReadBounds: bad start/count are refused in Go with ErrBounds and a
// message naming file, variable and dimension.
func TestReadBounds(t *testing.T) {
	p := smallFile(t)
	f, err := Open(p)
	check(t, err)
	defer f.Close()
	cases := []struct {
		name         string
		v            string
		start, count []int
		msg          string // after "read <path>: variable "<v>": "
	}{
		{"count beyond", "u", []int{20}, []int{5}, `start+count exceeds dimension "nCells" (length 24)`},
		{"start beyond", "u", []int{25}, []int{0}, `start+count exceeds dimension "nCells" (length 24)`},
		{"start beyond, count nil", "u", []int{30}, nil, `start+count exceeds dimension "nCells" (length 24)`},
		{"negative start", "u", []int{-1}, []int{1}, `negative start -1 in dimension "nCells"`},
		{"negative count", "u", []int{0}, []int{-2}, `negative count -2 in dimension "nCells"`},
		{"start rank", "u", []int{0, 0}, nil, "start has 2 entries, variable has 1 dimensions"},
		{"count rank", "t", nil, []int{1}, "count has 1 entries, variable has 2 dimensions"},
		{"second dimension", "t", []int{0, 1}, []int{1, 3}, `start+count exceeds dimension "nLev" (length 3)`},
		{"scalar with start", "s", []int{0}, nil, "start has 1 entries, variable has 0 dimensions"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			err := f.ReadFloat64s(c.v, c.start, c.count, nil)
			if !errors.Is(err, ErrBounds) {
				t.Fatalf("got %v, want ErrBounds", err)
			}
			if want := fmt.Sprintf("read %s: variable %q: %s", p, c.v, c.msg); err.Error() != want {
				t.Errorf("message\n got %s\nwant %s", err, want)
			}
		})
	}

	// Valid edge cases: empty boxes, a box ending at the last element, a scalar.
	check(t, f.ReadFloat64s("u", []int{24}, []int{0}, nil))
	check(t, f.ReadFloat64s("u", []int{3}, []int{0}, []float64{}))
	last := make([]float64, 4)
	check(t, f.ReadFloat64s("u", []int{20}, nil, last))
	if last[3] != 23 {
		t.Errorf("last element %v, want 23", last[3])
	}
	s := make([]int64, 1)
	check(t, f.ReadInt64s("s", nil, nil, s))
	if s[0] != 5 {
		t.Errorf("scalar %v, want 5", s[0])
	}
}

// TestReadPanicsOnLength: a destination of the wrong length is a
// programming error.
func TestReadPanicsOnLength(t *testing.T) {
	f, err := Open(smallFile(t))
	check(t, err)
	defer f.Close()
	defer func() {
		if r := recover(); r == nil || !strings.Contains(fmt.Sprint(r), "len(dst) = 3") {
			t.Errorf("recovered %v, want a panic about len(dst)", r)
		}
	}()
	f.ReadFloat64s("u", []int{0}, []int{4}, make([]float64, 3))
}

// TestOpenErrors: what Open refuses, and how it says so.
func TestOpenErrors(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		check(t, os.WriteFile(p, b, 0o600))
		return p
	}
	valid, err := os.ReadFile(smallFile(t))
	check(t, err)
	cp := tempFile(t, "classic.nc")
	sample{format: Classic64, nRec: 3}.write(t, cp)
	classic, err := os.ReadFile(cp)
	check(t, err)
	cases := []struct {
		name string
		path string
		kind error
	}{
		{"missing file", filepath.Join(dir, "nope.nc"), fs.ErrNotExist},
		{"directory", dir, ErrFormat},
		{"empty file", write("empty.nc", nil), ErrFormat},
		{"text file", write("text.nc", []byte("netcdf x { dimensions: n = 1 ; }")), ErrFormat},
		{"classic magic only", write("magic.nc", []byte("CDF\x01")), ErrFormat},
		{"classic version 3", write("v3.nc", []byte("CDF\x03\x00\x00\x00\x00"+strings.Repeat("\x00", 40))), ErrFormat},
		{"classic huge dimension count", write("dims.nc", []byte("CDF\x01\x00\x00\x00\x00\x00\x00\x00\x0a\x7f\xff\xff\xff"+strings.Repeat("\x00", 40))), ErrFormat},
		{"truncated NetCDF-4", write("trunc4.nc", valid[:len(valid)/2]), ErrFormat},
		{"classic, last record cut", write("trunc2r.nc", classic[:len(classic)-4]), ErrFormat},
		{"classic, fixed data cut", write("trunc2f.nc", classic[:len(classic)/2+100]), ErrFormat},
		{"classic, header cut", write("trunc2h.nc", classic[:100]), ErrFormat},
		{"NUL in path", "a\x00b.nc", ErrInvalid},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			f, err := Open(c.path)
			if err == nil {
				f.Close()
				t.Fatal("opened")
			}
			if !errors.Is(err, c.kind) {
				t.Errorf("got %v, want %v", err, c.kind)
			}
			if !strings.HasPrefix(err.Error(), "open "+c.path+": ") {
				t.Errorf("message %q does not start with the operation and path", err)
			}
		})
	}
}

// TestNotFoundAndClosed: missing names give ErrNotFound, a closed file
// ErrClosed.
func TestNotFoundAndClosed(t *testing.T) {
	p := smallFile(t)
	f, err := Open(p)
	check(t, err)
	if _, err := f.Var("v"); !errors.Is(err, ErrNotFound) || err.Error() != `read `+p+`: variable "v": no such variable` {
		t.Errorf("Var: %v", err)
	}
	if _, err := f.Dim("nEdges"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Dim: %v", err)
	}
	if err := f.ReadInt32s("v", nil, nil, nil); !errors.Is(err, ErrNotFound) {
		t.Errorf("Read: %v", err)
	}
	check(t, f.Close())
	if err := f.ReadFloat64s("u", nil, nil, make([]float64, 24)); !errors.Is(err, ErrClosed) {
		t.Errorf("read after Close: %v", err)
	}
	if err := f.Close(); !errors.Is(err, ErrClosed) {
		t.Errorf("second Close: %v", err)
	}
	// Metadata stays readable after Close.
	if d, err := f.Dim("nCells"); err != nil || d.Len != 24 {
		t.Errorf("Dim after Close: %v, %v", d, err)
	}
}

// TestLibErrorMapping: errno codes reach errors.Is through LibError.
func TestLibErrorMapping(t *testing.T) {
	for _, format := range []Format{NetCDF4, Classic64} {
		_, err := Create(filepath.Join(t.TempDir(), "no", "such", "dir.nc"), CreateOptions{Format: format})
		if !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("create in a missing directory: got %v, want fs.ErrNotExist", err)
		}
	}
	// errno codes from the library itself: ENOENT from nc_open (the C
	// library's errno values are the kernel's, so syscall.Errno matches).
	le := &LibError{Code: 2, Msg: "No such file or directory"}
	if !errors.Is(&Error{Op: "open", Path: "x", Err: le}, fs.ErrNotExist) {
		t.Error("LibError with ENOENT does not match fs.ErrNotExist")
	}
	if !errors.Is(&LibError{Code: -49}, ErrNotFound) { // NC_ENOTVAR
		t.Error("NC_ENOTVAR does not match ErrNotFound")
	}
}
