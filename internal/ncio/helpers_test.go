package ncio

import (
	"path/filepath"
	"testing"
)

// check fails the test at once on a non-nil error.
func check(tb testing.TB, err error) {
	tb.Helper()
	if err != nil {
		tb.Fatal(err)
	}
}

// sample is a small file with one variable of every numeric type the
// format allows, a record variable, and text, numeric and (NetCDF-4)
// string attributes. Values are invented test data.
type sample struct {
	format Format
	nRec   int
}

func (s sample) types() []Type {
	if s.format == Classic64 {
		return []Type{Int8, Int16, Int32, Float32, Float64}
	}
	return []Type{Int8, Uint8, Int16, Uint16, Int32, Uint32, Int64, Uint64, Float32, Float64}
}

// values returns the 6 values of variable "v_<type>" in sample files.
func sampleValues() []float64 { return []float64{0, 1, 2, 3, 4, 100} }

func (s sample) write(tb testing.TB, path string) {
	tb.Helper()
	w, err := Create(path, CreateOptions{Format: s.format})
	check(tb, err)
	defer w.Abort()
	check(tb, w.DefDim("time", 0))
	check(tb, w.DefDim("nCells", 3))
	check(tb, w.DefDim("two", 2))
	check(tb, w.PutAttrText("", "title", "colbridge ncio sample"))
	check(tb, w.PutAttrInt32s("", "version", 1, 2))
	if s.format == NetCDF4 {
		check(tb, w.PutAttrStrings("", "names", "alpha", "beta"))
	}
	for _, t := range s.types() {
		name := "v_" + t.String()
		check(tb, w.DefVar(name, t, []string{"two", "nCells"}))
		check(tb, w.PutAttrFloat64s(name, "_FillValue", 7))
		check(tb, w.PutAttrText(name, "units", "1"))
	}
	check(tb, w.DefVar("rec", Float64, []string{"time", "nCells"}))
	check(tb, w.PutAttrFloat64s("rec", "missing_value", -1, -2))
	check(tb, w.DefVar("scalar", Float64, nil))
	check(tb, w.EndDef())
	for _, t := range s.types() {
		check(tb, w.WriteFloat64s("v_"+t.String(), nil, nil, sampleValues()))
	}
	for r := range s.nRec {
		check(tb, w.WriteFloat64s("rec", []int{r, 0}, []int{1, 3}, []float64{float64(r), 0.5, -0.25}))
	}
	check(tb, w.WriteFloat64s("scalar", nil, nil, []float64{42}))
	check(tb, w.Commit())
}

func tempFile(tb testing.TB, name string) string {
	return filepath.Join(tb.TempDir(), name)
}
