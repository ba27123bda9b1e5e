package scenario

import (
	"math"
	"path/filepath"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// FieldsFile is the name of the demo's dynamics fields.
const FieldsFile = "dynamics_fields.nc"

// WriteFields writes the demo's dynamics state on mesh dyn and levels lev into
// dir/FieldsFile: two times of every plan variable in CF/UGRID layout, (time, lev, face)
// or (time, lev, edge), with a topology variable carrying the mesh's fingerprint (the
// geometry is in the mesh file). The values are invented from published profiles: the
// 1976 U.S. Standard Atmosphere in the vertical, the Williamson et al. (1992) test case 2
// wind, a cosine-bell tracer with three missing values at the second time.
func (s Scenario) WriteFields(dir string, dyn *grids.Mesh, lev *grids.Levels) (string, error) {
	path := filepath.Join(dir, FieldsFile)
	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		return "", err
	}
	defer w.Abort()
	nt, nl, nc, ne := 2, lev.NLev(), dyn.NumCells(), dyn.NumEdges()
	for _, d := range []struct {
		name string
		n    int
	}{{"time", 0}, {"lev", nl}, {"ilev", nl + 1}, {"nmesh_face", nc}, {"nmesh_edge", ne}} {
		if err := w.DefDim(d.name, d.n); err != nil {
			return "", err
		}
	}
	type vdef struct {
		name  string
		dims  []string
		attrs [][2]string
	}
	cell3 := []string{"time", "lev", "nmesh_face"}
	defs := []vdef{
		{"mesh", nil, [][2]string{{"cf_role", "mesh_topology"}, {"long_name", "dynamics mesh (geometry in " + s.DynamicsFile + ")"},
			{"face_dimension", "nmesh_face"}, {"edge_dimension", "nmesh_edge"}, {"colbridge_name", dyn.Name}, {"colbridge_fingerprint", dyn.Fingerprint()}}},
		{"time", []string{"time"}, [][2]string{{"standard_name", "time"}, {"units", "hours since 2000-01-01 00:00:00"}, {"calendar", "standard"}}},
		{"lev", []string{"lev"}, [][2]string{{"standard_name", "height"}, {"long_name", "height of layer midpoints"}, {"units", "m"}, {"positive", "up"}, {"axis", "Z"}}},
		{"ilev", []string{"ilev"}, [][2]string{{"standard_name", "height"}, {"long_name", "height of interfaces"}, {"units", "m"}, {"positive", "up"}}},
		{"air_density", cell3, [][2]string{{"standard_name", "air_density"}, {"long_name", "air density, layer means"}, {"units", "kg m-3"}, {"mesh", "mesh"}, {"location", "face"}}},
		{"layer_mass", cell3, [][2]string{{"long_name", "air mass per unit area of each layer"}, {"units", "kg m-2"}, {"mesh", "mesh"}, {"location", "face"}}},
		{"theta", []string{"time", "ilev", "nmesh_face"}, [][2]string{{"standard_name", "air_potential_temperature"}, {"units", "K"}, {"mesh", "mesh"}, {"location", "face"}}},
		{"tracer", cell3, [][2]string{{"long_name", "demo tracer mixing ratio"}, {"units", "kg kg-1"}, {"mesh", "mesh"}, {"location", "face"}}},
		{"u", []string{"time", "lev", "nmesh_edge"}, [][2]string{{"long_name", "wind component along the edge normals"}, {"units", "m s-1"}, {"mesh", "mesh"}, {"location", "edge"}}},
		{"surface_pressure", []string{"time", "nmesh_face"}, [][2]string{{"standard_name", "surface_air_pressure"}, {"units", "Pa"}, {"mesh", "mesh"}, {"location", "face"}}},
	}
	for _, d := range defs {
		t := ncio.Float64
		if d.name == "mesh" {
			t = ncio.Int32
		}
		if err := w.DefVar(d.name, t, d.dims); err != nil {
			return "", err
		}
		for _, a := range d.attrs {
			if err := w.PutAttrText(d.name, a[0], a[1]); err != nil {
				return "", err
			}
		}
	}
	const fill = 1e20
	if err := w.PutAttrFloat64s("tracer", "_FillValue", fill); err != nil {
		return "", err
	}
	if err := w.PutAttrInt32s("mesh", "topology_dimension", 2); err != nil {
		return "", err
	}
	for _, g := range [][2]string{{"Conventions", "CF-1.11 UGRID-1.0"}, {"title", "colbridge demo: invented dynamics state"},
		{"history", "written by colbridge demo"}} {
		if err := w.PutAttrText("", g[0], g[1]); err != nil {
			return "", err
		}
	}
	if err := w.EndDef(); err != nil {
		return "", err
	}
	z, mid, dz := lev.Interfaces, lev.Midpoints(), lev.Thicknesses()
	for _, c := range []struct {
		name string
		x    []float64
	}{{"time", []float64{0, 6}}, {"lev", mid}, {"ilev", z}} {
		if err := w.WriteFloat64s(c.name, []int{0}, []int{len(c.x)}, c.x); err != nil {
			return "", err
		}
	}
	tc2 := analytic.TC2{Alpha: 0.05}
	bell := r3.Unit(r3.Vec{X: 1, Y: 1, Z: 0.5})
	rho := make([]float64, nl*nc)
	mass := make([]float64, nl*nc)
	theta := make([]float64, (nl+1)*nc)
	tracer := make([]float64, nl*nc)
	u := make([]float64, nl*ne)
	ps := make([]float64, nc)
	for t := 0; t < nt; t++ {
		phase := float64(t) * math.Pi / 2
		for c := 0; c < nc; c++ {
			p := dyn.CellCentroid[c]
			_, lat := analytic.LonLat(p)
			wave := 1 + 0.02*math.Sin(lat)*math.Cos(phase)
			h := tc2.Height(p)
			ps[c] = analytic.StdP0 * h / 2500
			d := math.Acos(math.Max(-1, math.Min(1, r3.Dot(p, bell))))
			q := 0.0
			if d < 0.5 {
				q = 1e-3 * (1 + math.Cos(math.Pi*d/0.5)) / 2
			}
			for k := 0; k < nl; k++ {
				_, _, r := analytic.StdAtmosphere(analytic.GeopotentialHeight(mid[k]))
				rho[k*nc+c] = r * wave
				mass[k*nc+c] = r * wave * dz[k]
				tracer[k*nc+c] = q * math.Exp(-mid[k]/8000)
			}
			for k := 0; k <= nl; k++ {
				T, P, _ := analytic.StdAtmosphere(analytic.GeopotentialHeight(z[k]))
				theta[k*nc+c] = T * math.Pow(analytic.StdP0/P, 0.2857) * wave
			}
		}
		if t == 1 {
			for _, c := range []int{0, nc / 3, 2 * nc / 3} {
				tracer[c] = fill
			}
		}
		for e := 0; e < ne; e++ {
			un := r3.Dot(tc2.Velocity(dyn.EdgeMid[e]), dyn.EdgeNormal[e])
			for k := 0; k < nl; k++ {
				u[k*ne+e] = un * (1 + mid[k]/10000) * math.Cos(phase/2)
			}
		}
		for _, v := range []struct {
			name string
			x    []float64
			n    []int
		}{{"air_density", rho, []int{1, nl, nc}}, {"layer_mass", mass, []int{1, nl, nc}}, {"theta", theta, []int{1, nl + 1, nc}},
			{"tracer", tracer, []int{1, nl, nc}}, {"u", u, []int{1, nl, ne}}, {"surface_pressure", ps, []int{1, nc}}} {
			start := make([]int, len(v.n))
			start[0] = t
			if err := w.WriteFloat64s(v.name, start, v.n, v.x); err != nil {
				return "", err
			}
		}
	}
	return path, w.Commit()
}
