package remap

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/weights"
)

// tdim is a dimension of a test file; n is the length written also for an unlimited one.
type tdim struct {
	name      string
	n         int
	unlimited bool
}

// tvar is a variable of a test file.
type tvar struct {
	name  string
	dims  []string
	t     ncio.Type // 0: Float64
	data  []float64
	text  [][2]string
	nums  map[string][]float64
	ints  map[string][]int32
	isInt bool
}

// writeTestFile writes a NetCDF file of the given format with the dimensions and
// variables (data in C order, covering each variable whole).
func writeTestFile(t testing.TB, path string, format ncio.Format, dims []tdim, vars []tvar) {
	t.Helper()
	w, err := ncio.Create(path, ncio.CreateOptions{Format: format})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Abort()
	lens := map[string]int{}
	for _, d := range dims {
		n := d.n
		if d.unlimited {
			n = 0
		}
		check(t, w.DefDim(d.name, n))
		lens[d.name] = d.n
	}
	for _, v := range vars {
		typ := v.t
		if typ == 0 {
			typ = ncio.Float64
		}
		check(t, w.DefVar(v.name, typ, v.dims))
		for _, a := range v.text {
			check(t, w.PutAttrText(v.name, a[0], a[1]))
		}
		for k, x := range v.nums {
			check(t, w.PutAttrFloat64s(v.name, k, x...))
		}
		for k, x := range v.ints {
			check(t, w.PutAttrInt32s(v.name, k, x...))
		}
	}
	check(t, w.EndDef())
	for _, v := range vars {
		if v.data == nil {
			continue
		}
		count := make([]int, len(v.dims))
		for i, d := range v.dims {
			count[i] = lens[d]
		}
		check(t, w.WriteFloat64s(v.name, nil, count, v.data))
	}
	check(t, w.Commit())
}

func check(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// topoVar is a UGRID topology variable naming mesh m by its fingerprint (no geometry).
func topoVar(m *grids.Mesh, faceDim, edgeDim string) tvar {
	text := [][2]string{{"cf_role", "mesh_topology"}, {"colbridge_fingerprint", m.Fingerprint()}, {"colbridge_name", m.Name}}
	if faceDim != "" {
		text = append(text, [2]string{"face_dimension", faceDim})
	}
	if edgeDim != "" {
		text = append(text, [2]string{"edge_dimension", edgeDim})
	}
	return tvar{name: "mesh", t: ncio.Int32, text: text, ints: map[string][]int32{"topology_dimension": {2}}}
}

// readVar reads a whole variable as float64.
func readVar(t testing.TB, path, name string) ([]float64, ncio.Var) {
	t.Helper()
	f, err := ncio.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	v, err := f.Var(name)
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, v.Len())
	check(t, f.ReadFloat64s(name, nil, nil, x))
	return x, v
}

// readAttr reads a text attribute ("" if absent).
func readAttr(t testing.TB, path, v, name string) string {
	t.Helper()
	f, err := ncio.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	s, _ := f.AttrText(v, name)
	return s
}

// compSum is Σ a_i b_i with compensated summation.
func compSum(a, b []float64) float64 {
	var acc weights.Accumulator
	for i := range a {
		acc.Add(a[i] * b[i])
	}
	return acc.Sum()
}

// compAbsSum is Σ |a_i b_i|.
func compAbsSum(a, b []float64) float64 {
	var acc weights.Accumulator
	for i := range a {
		acc.Add(math.Abs(a[i] * b[i]))
	}
	return acc.Sum()
}

// writeMapFile writes m into dir and returns its path.
func writeMapFile(t testing.TB, dir, name string, m *weights.Map) string {
	t.Helper()
	p := filepath.Join(dir, name)
	check(t, weights.WriteMap(p, m))
	return p
}

// listDir returns the names in dir (hidden temporary files included).
func listDir(t testing.TB, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		return nil // no directory there (or not one): nothing written
	}
	var out []string
	for _, e := range es {
		out = append(out, e.Name())
	}
	return out
}
