package remap

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// hdf5Signature starts every NetCDF-4 file.
var hdf5Signature = []byte("\x89HDF\r\n\x1a\n")

// FuzzReadFields feeds arbitrary bytes, seeded with small valid classic field files, to
// the field-file reader of apply: opening, finding the fields on a map's source, checking
// their layouts, and a whole ApplyFile. The only acceptable outcomes are an output file or
// an error naming the input; a panic or a half-written output is a finding. While fuzzing,
// inputs with the HDF5 signature are skipped unless COLBRIDGE_FUZZ_HDF5=1: corrupt
// NetCDF-4 files crash the C library itself (internal/ncio documents it).
func FuzzReadFields(f *testing.F) {
	src, err := grids.NewCubedSphere(2, 0)
	check(f, err)
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 4, NLat: 2})
	check(f, err)
	m, err := Build(src, tgt, Options{Method: Conservative, Order: 1})
	check(f, err)
	dir := f.TempDir()
	mp := writeMapFile(f, dir, "m.nc", m)
	a, err := NewMapApplier(mp)
	check(f, err)
	n := src.NumCells()
	seed := func(dims []tdim, vars []tvar) {
		p := filepath.Join(dir, "seed.nc")
		writeTestFile(f, p, ncio.Classic64, dims, vars)
		b, err := os.ReadFile(p)
		check(f, err)
		f.Add(b)
	}
	x := make([]float64, 3*n)
	for i := range x {
		x[i] = float64(i)
	}
	seed([]tdim{{"c", n, false}}, []tvar{{name: "f", dims: []string{"c"}, data: x[:n]}})
	seed([]tdim{{"t", 3, true}, {"c", n, false}}, []tvar{
		{name: "t", dims: []string{"t"}, data: []float64{0, 1, 2}, text: [][2]string{{"units", "days since 2000-01-01"}}},
		{name: "f", dims: []string{"t", "c"}, data: x, t: ncio.Float32, nums: map[string][]float64{"_FillValue": {2}, "scale_factor": {0.5}},
			text: [][2]string{{"units", "K"}, {"location", "face"}}}})
	seed([]tdim{{"c", n, false}, {"two", 2, false}}, []tvar{{name: "g", dims: []string{"two", "c"}, data: x[:2*n], t: ncio.Int16,
		nums: map[string][]float64{"add_offset": {100}, "missing_value": {5}}}})
	skipHDF5 := fuzzing() && os.Getenv("COLBRIDGE_FUZZ_HDF5") == ""
	f.Fuzz(func(t *testing.T, data []byte) {
		if skipHDF5 && bytes.Contains(data, hdf5Signature) {
			t.Skip("HDF5 input: set COLBRIDGE_FUZZ_HDF5=1 to fuzz the NetCDF-4 path")
		}
		d := t.TempDir()
		in := filepath.Join(d, "in.nc")
		check(t, os.WriteFile(in, data, 0o600))
		if f, err := openInput(in); err == nil {
			for _, name := range f.candidates(m.Source.Location, n) {
				f.layout(name, m.Source.Location, n, 0)
			}
			f.f.Close()
		}
		outDir := filepath.Join(d, "out")
		rs := a.ApplyFiles([]string{in}, outDir, ApplyOptions{Memory: 256 << 20}, 1, false, nil)
		if err := rs[0].Err; err != nil {
			if !strings.Contains(err.Error(), in) {
				t.Fatalf("error does not name the input: %v", err)
			}
			if names := listDir(t, outDir); len(names) != 0 {
				t.Fatalf("failed, but left %v", names)
			}
		}
	})
}

// fuzzing reports whether the test binary runs with -test.fuzz.
func fuzzing() bool {
	fl := flag.Lookup("test.fuzz")
	return fl != nil && fl.Value.String() != ""
}
