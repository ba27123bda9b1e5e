package ncio

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// tempNames lists the Writer temporaries in dir.
func tempNames(t *testing.T, dir string) []string {
	t.Helper()
	m, err := filepath.Glob(filepath.Join(dir, ".*.tmp-*"))
	check(t, err)
	return m
}

func exists(path string) bool {
	_, err := os.Stat(path)
	return err == nil
}

// TestCommitAbort: nothing under the final name before Commit, the
// temporary is gone after Commit and after Abort, and an ended Writer
// refuses further calls.
func TestCommitAbort(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	check(t, w.DefDim("n", 2))
	check(t, w.DefVar("v", Float64, []string{"n"}))
	check(t, w.EndDef())
	check(t, w.WriteFloat64s("v", nil, nil, []float64{1, 2}))
	tmps := tempNames(t, dir)
	if exists(p) || len(tmps) != 1 || !strings.HasPrefix(filepath.Base(tmps[0]), ".out.nc.tmp-") {
		t.Fatalf("before Commit: final exists %v, temporaries %v", exists(p), tmps)
	}
	check(t, w.Commit())
	if !exists(p) || len(tempNames(t, dir)) != 0 {
		t.Fatalf("after Commit: final exists %v, temporaries %v", exists(p), tempNames(t, dir))
	}
	if err := w.WriteFloat64s("v", nil, nil, []float64{1, 2}); !errors.Is(err, ErrClosed) {
		t.Errorf("write after Commit: %v", err)
	}
	if err := w.Commit(); !errors.Is(err, ErrClosed) {
		t.Errorf("second Commit: %v", err)
	}
	if err := w.Abort(); err != nil {
		t.Errorf("Abort after Commit: %v, want nil (no-op)", err)
	}
	if !exists(p) {
		t.Error("Abort after Commit removed the file")
	}

	// Abort: no file at all; an existing file under the name is untouched.
	check(t, os.WriteFile(p, []byte("old"), 0o600))
	w, err = Create(p, CreateOptions{Format: Classic64})
	check(t, err)
	check(t, w.DefDim("n", 2))
	check(t, w.Abort())
	if b, _ := os.ReadFile(p); string(b) != "old" || len(tempNames(t, dir)) != 0 {
		t.Errorf("after Abort: %q, temporaries %v", b, tempNames(t, dir))
	}
	if err := w.DefDim("m", 1); !errors.Is(err, ErrClosed) {
		t.Errorf("DefDim after Abort: %v", err)
	}
	if err := w.Commit(); !errors.Is(err, ErrClosed) {
		t.Errorf("Commit after Abort: %v", err)
	}
	check(t, w.Abort())

	// Commit replaces an existing file only at the end.
	w, err = Create(p, CreateOptions{})
	check(t, err)
	check(t, w.DefDim("n", 1))
	if b, _ := os.ReadFile(p); string(b) != "old" {
		t.Errorf("old file changed before Commit: %q", b)
	}
	check(t, w.Commit()) // Commit in define mode ends it
	f, err := Open(p)
	check(t, err)
	f.Close()
}

// TestModes: data calls need EndDef, define calls need define mode.
func TestModes(t *testing.T) {
	w, err := Create(tempFile(t, "m.nc"), CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("n", 1))
	check(t, w.DefVar("v", Int32, []string{"n"}))
	if err := w.WriteInt32s("v", nil, nil, []int32{1}); !errors.Is(err, ErrState) || !strings.Contains(err.Error(), "call EndDef first") {
		t.Errorf("write in define mode: %v", err)
	}
	w2, err := Create(tempFile(t, "m2.nc"), CreateOptions{})
	check(t, err)
	defer w2.Abort()
	check(t, w2.EndDef())
	if err := w2.DefDim("n", 1); !errors.Is(err, ErrState) {
		t.Errorf("DefDim in data mode: %v", err)
	}
}

// TestStickyError: after a failed call the Writer keeps failing, and
// Commit returns the first error and leaves nothing behind.
func TestStickyError(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "s.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	check(t, w.DefDim("n", 2))
	first := w.DefVar("v", Float64, []string{"m"}) // no such dimension
	if !errors.Is(first, ErrNotFound) || !strings.Contains(first.Error(), `dimension "m" not defined`) {
		t.Fatalf("DefVar: %v", first)
	}
	if err := w.DefDim("k", 3); err != first {
		t.Errorf("later call: %v, want the first error", err)
	}
	if err := w.Commit(); err != first {
		t.Errorf("Commit: %v, want the first error", err)
	}
	if exists(p) || len(tempNames(t, dir)) != 0 {
		t.Error("a failed Writer left files")
	}
}

// TestInjectedWriteFault: the hook makes write K+1 fail; Commit then
// fails and leaves neither the file nor its temporary.
func TestInjectedWriteFault(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "fault.nc")
	restore := InjectWriteFault(2)
	w, err := Create(p, CreateOptions{})
	restore()
	check(t, err)
	check(t, w.DefDim("t", 0))
	check(t, w.DefVar("v", Float64, []string{"t"}))
	check(t, w.EndDef())
	check(t, w.WriteFloat64s("v", []int{0}, []int{1}, []float64{1}))
	check(t, w.WriteFloat64s("v", []int{1}, []int{1}, []float64{2}))
	err = w.WriteFloat64s("v", []int{2}, []int{1}, []float64{3})
	if !errors.Is(err, ErrInjected) || !strings.Contains(err.Error(), p) {
		t.Fatalf("third write: %v, want ErrInjected naming the file", err)
	}
	if err := w.Commit(); !errors.Is(err, ErrInjected) {
		t.Errorf("Commit: %v", err)
	}
	if exists(p) || len(tempNames(t, dir)) != 0 {
		t.Error("files left after an injected fault")
	}
	// Writers created after restore are unaffected.
	w, err = Create(p, CreateOptions{})
	check(t, err)
	check(t, w.DefDim("n", 1))
	check(t, w.DefVar("v", Float64, []string{"n"}))
	check(t, w.EndDef())
	for range 4 {
		check(t, w.WriteFloat64s("v", nil, nil, []float64{1}))
	}
	check(t, w.Commit())
}

// TestUnlimitedAppend: records appended one by one and in blocks, two
// variables sharing the record dimension, and a gap that reads back as
// the fill value (NetCDF Users Guide, "Fill Values": unwritten data hold
// _FillValue). Both formats.
func TestUnlimitedAppend(t *testing.T) {
	for _, format := range []Format{NetCDF4, Classic64} {
		p := tempFile(t, "u.nc")
		w, err := Create(p, CreateOptions{Format: format})
		check(t, err)
		defer w.Abort()
		check(t, w.DefDim("time", 0))
		check(t, w.DefDim("n", 2))
		check(t, w.DefVar("a", Float64, []string{"time", "n"}))
		check(t, w.PutAttrFloat64s("a", "_FillValue", -5))
		check(t, w.DefVar("b", Int16, []string{"time"}))
		check(t, w.EndDef())
		for r := range 3 {
			check(t, w.WriteFloat64s("a", []int{r, 0}, []int{1, 2}, []float64{float64(r), float64(10 * r)}))
		}
		check(t, w.WriteInt32s("b", []int{0}, []int{2}, []int32{7, 8}))
		// Skip record 3 of a: write record 4.
		check(t, w.WriteFloat64s("a", []int{4, 0}, nil, nil)) // count nil on an empty box: nothing
		check(t, w.WriteFloat64s("a", []int{4, 0}, []int{1, 2}, []float64{4, 40}))
		// A bad fixed dimension is still caught.
		if err := w.WriteFloat64s("a", []int{5, 1}, []int{1, 2}, []float64{0, 0}); !errors.Is(err, ErrBounds) {
			t.Fatalf("format %d: bad append: %v", format, err)
		}
		w.Abort()

		// Again without the bad write, then commit and read.
		w, err = Create(p, CreateOptions{Format: format})
		check(t, err)
		check(t, w.DefDim("time", 0))
		check(t, w.DefDim("n", 2))
		check(t, w.DefVar("a", Float64, []string{"time", "n"}))
		check(t, w.PutAttrFloat64s("a", "_FillValue", -5))
		check(t, w.EndDef())
		for r := range 3 {
			check(t, w.WriteFloat64s("a", []int{r, 0}, []int{1, 2}, []float64{float64(r), float64(10 * r)}))
		}
		check(t, w.WriteFloat64s("a", []int{4, 0}, []int{1, 2}, []float64{4, 40}))
		check(t, w.Commit())
		f, err := Open(p)
		check(t, err)
		d, _ := f.Dim("time")
		got := make([]float64, 10)
		check(t, f.ReadFloat64s("a", nil, nil, got))
		want := []float64{0, 0, 1, 10, 2, 20, -5, -5, 4, 40}
		if d.Len != 5 || !d.Unlimited || !slices.Equal(got, want) {
			t.Errorf("format %d: time %+v, a = %v, want %v", format, d, got, want)
		}
		f.Close()
	}
}

// TestDeflateAndChunking: compressed constant data is much smaller than
// raw, reads back exactly, and bad settings are refused.
func TestDeflateAndChunking(t *testing.T) {
	const n = 1 << 17 // 1 MiB of float64
	dir := t.TempDir()
	size := func(deflate int) int64 {
		p := filepath.Join(dir, "d.nc")
		w, err := Create(p, CreateOptions{})
		check(t, err)
		defer w.Abort()
		check(t, w.DefDim("n", n))
		check(t, w.DefVar("v", Float64, []string{"n"}))
		check(t, w.SetDeflate("v", deflate, true))
		check(t, w.SetChunking("v", []int{n / 4}))
		check(t, w.EndDef())
		src := make([]float64, n)
		for i := range src {
			src[i] = float64(i % 8)
		}
		check(t, w.WriteFloat64s("v", nil, nil, src))
		check(t, w.Commit())
		f, err := Open(p)
		check(t, err)
		defer f.Close()
		got := make([]float64, n)
		check(t, f.ReadFloat64s("v", nil, nil, got))
		if !slices.Equal(got, src) {
			t.Errorf("deflate %d: data differ", deflate)
		}
		st, err := os.Stat(p)
		check(t, err)
		return st.Size()
	}
	raw, packed := size(0), size(1)
	// A period-8 pattern compresses far better than 10:1 with zlib (common practice).
	if raw < 8*n || packed*10 > raw {
		t.Errorf("raw %d bytes, deflated %d bytes: want raw ≥ %d and deflated < raw/10", raw, packed, 8*n)
	}

	cases := []struct {
		name   string
		format Format
		call   func(w *Writer) error
	}{
		{"level 10", NetCDF4, func(w *Writer) error { return w.SetDeflate("v", 10, false) }},
		{"deflate classic", Classic64, func(w *Writer) error { return w.SetDeflate("v", 1, false) }},
		{"chunk rank", NetCDF4, func(w *Writer) error { return w.SetChunking("v", []int{1, 1}) }},
		{"chunk zero", NetCDF4, func(w *Writer) error { return w.SetChunking("v", []int{0}) }},
		{"chunk too long", NetCDF4, func(w *Writer) error { return w.SetChunking("v", []int{5}) }},
		{"chunk classic", Classic64, func(w *Writer) error { return w.SetChunking("v", []int{1}) }},
		{"chunk scalar", NetCDF4, func(w *Writer) error { return w.SetChunking("s", nil) }},
	}
	for _, c := range cases {
		w, err := Create(filepath.Join(dir, "e.nc"), CreateOptions{Format: c.format})
		check(t, err)
		check(t, w.DefDim("n", 4))
		check(t, w.DefVar("v", Float32, []string{"n"}))
		check(t, w.DefVar("s", Float32, nil))
		if err := c.call(w); !errors.Is(err, ErrInvalid) || !strings.Contains(err.Error(), `variable "v"`) && !strings.Contains(err.Error(), `variable "s"`) {
			t.Errorf("%s: %v, want ErrInvalid naming the variable", c.name, err)
		}
		w.Abort()
	}
}

// TestDefineErrors: bad definitions and the library's refusals come back
// as errors naming file and variable.
func TestDefineErrors(t *testing.T) {
	cases := []struct {
		name   string
		format Format
		call   func(w *Writer) error
		kind   error // nil: a *LibError
	}{
		{"negative length", NetCDF4, func(w *Writer) error { return w.DefDim("m", -1) }, ErrInvalid},
		{"duplicate dimension", NetCDF4, func(w *Writer) error { return w.DefDim("n", 3) }, nil},
		{"second unlimited in classic", Classic64, func(w *Writer) error { return w.DefDim("t2", 0) }, nil},
		{"int64 variable in classic", Classic64, func(w *Writer) error { return w.DefVar("x", Int64, []string{"n"}) }, nil},
		{"text variable", NetCDF4, func(w *Writer) error { return w.DefVar("x", Char, []string{"n"}) }, ErrType},
		{"unknown type", NetCDF4, func(w *Writer) error { return w.DefVar("x", Type(99), []string{"n"}) }, ErrType},
		{"duplicate variable", NetCDF4, func(w *Writer) error { return w.DefVar("v", Float64, nil) }, nil},
		{"NUL in name", NetCDF4, func(w *Writer) error { return w.DefVar("a\x00b", Float64, nil) }, ErrInvalid},
		{"slash in name", NetCDF4, func(w *Writer) error { return w.DefVar("a/b", Float64, nil) }, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := tempFile(t, "d.nc")
			w, err := Create(p, CreateOptions{Format: c.format})
			check(t, err)
			defer w.Abort()
			check(t, w.DefDim("n", 2))
			check(t, w.DefDim("t", 0))
			check(t, w.DefVar("v", Float64, []string{"n"}))
			err = c.call(w)
			var e *Error
			if !errors.As(err, &e) || e.Path != p || e.Op != "define" {
				t.Fatalf("got %v, want a define *Error naming %s", err, p)
			}
			var le *LibError
			if c.kind != nil && !errors.Is(err, c.kind) || c.kind == nil && !errors.As(err, &le) {
				t.Errorf("got %v (kind %v)", err, c.kind)
			}
		})
	}
}

// TestWritePanicsOnLength: a source of the wrong length is a programming
// error; the Writer stays usable.
func TestWritePanicsOnLength(t *testing.T) {
	w, err := Create(tempFile(t, "p.nc"), CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("n", 3))
	check(t, w.DefVar("v", Float64, []string{"n"}))
	check(t, w.EndDef())
	func() {
		defer func() {
			if r := recover(); r == nil || !strings.Contains(r.(string), "len(src) = 2") {
				t.Errorf("recovered %v", r)
			}
		}()
		w.WriteFloat64s("v", nil, nil, []float64{1, 2})
	}()
	check(t, w.WriteFloat64s("v", nil, nil, []float64{1, 2, math.Pi}))
	check(t, w.Commit())
}
