package ncio

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzOpen writes arbitrary bytes (seeded with small valid classic and
// NetCDF-4 files, testdata/fuzz/FuzzOpen) to a file and opens it, lists
// everything and reads every attribute and up to fuzzMaxRead values of
// every variable. The only acceptable outcomes are success or an *Error
// naming the file; a crash in the C library is a finding (see doc.go).
//
// While fuzzing (go test -fuzz), inputs carrying the HDF5 signature are
// skipped unless COLBRIDGE_FUZZ_HDF5=1: corrupted NetCDF-4 files crash
// netCDF-C 4.9.0 / HDF5 1.10.8 within seconds (ncdump crashes on them
// too; examples in testdata/crashers), which would stop the fuzzer from
// exploring the classic reader and our own checks. Plain go test runs
// every corpus entry.
func FuzzOpen(f *testing.F) {
	skipHDF5 := fuzzing() && os.Getenv("COLBRIDGE_FUZZ_HDF5") == ""
	f.Fuzz(func(t *testing.T, data []byte) {
		if skipHDF5 && bytes.Contains(data, hdf5Magic) {
			t.Skip("HDF5 input: set COLBRIDGE_FUZZ_HDF5=1 to fuzz the NetCDF-4 path (crashes in the C library, see doc.go)")
		}
		p := filepath.Join(t.TempDir(), "fuzz.nc")
		check(t, os.WriteFile(p, data, 0o600))
		exercise(t, p)
	})
}

// exercise opens the file at p, lists everything and reads every
// attribute and up to fuzzMaxRead values of every variable, failing t on
// any error that is not an *Error naming p.
func exercise(t *testing.T, p string) {
	nf, err := Open(p)
	if err != nil {
		checkErr(t, err, p)
		return
	}
	defer nf.Close()
	for _, d := range nf.Dims() {
		if _, err := nf.Dim(d.Name); err != nil {
			t.Fatalf("listed dimension %q not found: %v", d.Name, err)
		}
	}
	for _, v := range append(nf.Vars(), Var{}) {
		as, err := nf.Attrs(v.Name)
		if err != nil {
			t.Fatal(err)
		}
		for _, a := range as {
			_, err1 := nf.AttrText(v.Name, a.Name)
			_, err2 := nf.AttrFloat64s(v.Name, a.Name)
			_, err3 := nf.AttrInt64s(v.Name, a.Name)
			for _, err := range []error{err1, err2, err3} {
				if err != nil {
					checkErr(t, err, p)
				}
			}
		}
		if v.Name == "" {
			continue
		}
		if _, _, err := nf.FillValue(v.Name); err != nil {
			checkErr(t, err, p)
		}
		if _, err := nf.MissingValues(v.Name); err != nil {
			checkErr(t, err, p)
		}
		if v.Len() <= fuzzMaxRead {
			if err := nf.ReadFloat64s(v.Name, nil, nil, make([]float64, v.Len())); err != nil {
				checkErr(t, err, p)
			}
		}
		if v.Len() > 0 {
			one := make([]int, len(v.Shape))
			for i := range one {
				one[i] = 1
			}
			if err := nf.ReadInt64s(v.Name, nil, one, make([]int64, 1)); err != nil {
				checkErr(t, err, p)
			}
		}
	}
}

// fuzzMaxRead bounds the values read per variable, so a header claiming
// 2^40 values does not make the fuzzer allocate terabytes.
const fuzzMaxRead = 1 << 16

// checkErr checks that err is an *Error naming path.
func checkErr(t *testing.T, err error, path string) {
	t.Helper()
	var e *Error
	if !errors.As(err, &e) {
		t.Fatalf("error of type %T, want *Error: %v", err, err)
	}
	if !strings.Contains(err.Error(), path) {
		t.Fatalf("error does not name the file: %v", err)
	}
}

// fuzzing reports whether the test binary runs with -test.fuzz.
func fuzzing() bool {
	fl := flag.Lookup("test.fuzz")
	return fl != nil && fl.Value.String() != ""
}

// TestWriteFuzzSeeds regenerates the seed corpus of FuzzOpen
// (testdata/fuzz/FuzzOpen/seed-*) when COLBRIDGE_WRITE_SEEDS=1: a small
// classic file and a small NetCDF-4 file with a record variable, a
// _FillValue, text and (NetCDF-4) string attributes and a scalar.
func TestWriteFuzzSeeds(t *testing.T) {
	if os.Getenv("COLBRIDGE_WRITE_SEEDS") == "" {
		t.Skip("set COLBRIDGE_WRITE_SEEDS=1 to rewrite testdata/fuzz/FuzzOpen/seed-*")
	}
	for name, format := range map[string]Format{"seed-classic": Classic64, "seed-netcdf4": NetCDF4} {
		p := tempFile(t, name+".nc")
		w, err := Create(p, CreateOptions{Format: format})
		check(t, err)
		check(t, w.DefDim("time", 0))
		check(t, w.DefDim("n", 3))
		check(t, w.DefVar("u", Float32, []string{"time", "n"}))
		check(t, w.PutAttrFloat64s("u", "_FillValue", -999))
		check(t, w.PutAttrText("u", "units", "m s-1"))
		check(t, w.DefVar("id", Int32, []string{"n"}))
		check(t, w.DefVar("c", Float64, nil))
		check(t, w.PutAttrText("", "title", "seed"))
		if format == NetCDF4 {
			check(t, w.PutAttrStrings("", "names", "a", "b"))
		}
		check(t, w.EndDef())
		check(t, w.WriteFloat64s("u", []int{0, 0}, []int{2, 3}, []float64{1, 2, 3, 4, 5, 6}))
		check(t, w.WriteInt32s("id", nil, nil, []int32{7, 8, 9}))
		check(t, w.WriteFloat64s("c", nil, nil, []float64{0.5}))
		check(t, w.Commit())
		b, err := os.ReadFile(p)
		check(t, err)
		out := filepath.Join("testdata", "fuzz", "FuzzOpen", name)
		check(t, os.WriteFile(out, []byte(fmt.Sprintf("go test fuzz v1\n[]byte(%q)\n", b)), 0o644))
		t.Logf("%s: %d bytes", out, len(b))
	}
}
