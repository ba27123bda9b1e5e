package scenario

import (
	"math"
	"path/filepath"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// FieldsFile is the name of the demo's dynamics state.
const FieldsFile = "dynamics_fields.nc"

// Hours are the times of the demo's day, in hours.
var Hours = []float64{0, 6, 12, 18, 24}

// state is the dynamics state at one time.
type state struct {
	rho, mass, tracer []float64 // (lev, face): kg m-3, kg m-2, kg kg-1
	theta             []float64 // (ilev, face): K
	u                 []float64 // (lev, edge): m s-1
	ps                []float64 // (face): Pa
}

// newState computes the invented dynamics state at hour h on mesh dyn and levels lev:
//
//   - air density: the exact layer means of the 1976 U.S. Standard Atmosphere,
//     ρ̄_k = (p(z_k) − p(z_{k+1}))/(g₀Δz_k) (hydrostatic in geopotential height), times a
//     horizontal factor from the surface pressure; layer_mass = ρ̄Δz;
//   - potential temperature on the interfaces from the standard atmosphere,
//     θ = T(p₀/p)^κ, with a slow planetary wave;
//   - the wind: Williamson et al. (1992) test case 2 (α = 0.05), exact edge means of the
//     normal component (stream-function difference over the edge length), growing with
//     height;
//   - surface pressure p₀·exp(g(h − h̄)/(R T₀)) from the test case's height h;
//   - a tracer: a cosine bell carried round the test case's rotation axis by its
//     solid-body flow, so it moves 30° in the day.
func newState(dyn *grids.Mesh, lev *grids.Levels, hour float64) *state {
	nl, nc, ne := lev.NLev(), dyn.NumCells(), dyn.NumEdges()
	st := &state{rho: make([]float64, nl*nc), mass: make([]float64, nl*nc), tracer: make([]float64, nl*nc),
		theta: make([]float64, (nl+1)*nc), u: make([]float64, nl*ne), ps: make([]float64, nc)}
	z, mid, dz := lev.Interfaces, lev.Midpoints(), lev.Thicknesses()
	tc2 := analytic.TC2{Alpha: 0.05}
	// The bell's centre turns about the flow's axis at ω = u₀/a.
	omega := analytic.TC2U0 / analytic.EarthRadius
	angle := omega * hour * 3600
	axis := tc2.Axis()
	c0 := r3.Unit(r3.Vec{X: 0.6, Y: 0.7, Z: 0.4})
	centre := rotate(c0, axis, angle)
	const hMean = 2600.0 // m, a representative mean of the test case's height
	const rT0 = 287.0531 * 288.15
	pz := make([]float64, nl+1)
	tz := make([]float64, nl+1)
	for k := range z {
		tz[k], pz[k], _ = analytic.StdAtmosphere(z[k])
	}
	for c := 0; c < nc; c++ {
		p := dyn.CellCentroid[c]
		_, lat := analytic.LonLat(p)
		st.ps[c] = analytic.StdP0 * math.Exp(analytic.Gravity*(tc2.Height(p)-hMean)/rT0)
		scale := st.ps[c] / analytic.StdP0
		wave := 1 + 0.01*math.Sin(2*lat)*math.Cos(2*math.Pi*hour/24)
		d := math.Acos(math.Max(-1, math.Min(1, r3.Dot(p, centre))))
		q := 0.0
		if d < 0.6 {
			q = 1e-3 * (1 + math.Cos(math.Pi*d/0.6)) / 2
		}
		for k := 0; k < nl; k++ {
			r := (pz[k] - pz[k+1]) / (analytic.StdG0 * dz[k]) * scale
			st.rho[k*nc+c] = r
			st.mass[k*nc+c] = r * dz[k]
			st.tracer[k*nc+c] = q * math.Exp(-mid[k]/8000)
		}
		for k := 0; k <= nl; k++ {
			st.theta[k*nc+c] = tz[k] * math.Pow(analytic.StdP0/pz[k], kappa) * wave
		}
	}
	for e := 0; e < ne; e++ {
		a := dyn.Verts[dyn.EdgeVerts[e][0]]
		b := dyn.Verts[dyn.EdgeVerts[e][1]]
		un := tc2.EdgeFlux(a, b) / dyn.EdgeLength[e]
		for k := 0; k < nl; k++ {
			st.u[k*ne+e] = un * (1 + mid[k]/10000)
		}
	}
	return st
}

// kappa is R/c_p of dry air (2/7, common practice).
const kappa = 2.0 / 7

// rotate turns p by angle about the unit axis (Rodrigues' formula).
func rotate(p, axis r3.Vec, angle float64) r3.Vec {
	s, c := math.Sincos(angle)
	return r3.Add(r3.Add(r3.Scale(c, p), r3.Scale(s, r3.Cross(axis, p))), r3.Scale(r3.Dot(axis, p)*(1-c), axis))
}

// WriteFields writes the demo's dynamics state for the day (Hours) on mesh dyn and levels
// lev into dir/FieldsFile, in CF/UGRID layout — (time, lev, face), (time, ilev, face),
// (time, lev, edge) — with a topology variable that names the mesh by its fingerprint
// (the geometry is in the mesh file). It returns the file's path.
func (s Scenario) WriteFields(dir string, dyn *grids.Mesh, lev *grids.Levels) (string, error) {
	path := filepath.Join(dir, FieldsFile)
	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		return "", err
	}
	defer w.Abort()
	nl, nc, ne := lev.NLev(), dyn.NumCells(), dyn.NumEdges()
	for _, d := range []struct {
		name string
		n    int
	}{{"time", 0}, {"lev", nl}, {"ilev", nl + 1}, {"nmesh_face", nc}, {"nmesh_edge", ne}} {
		if err := w.DefDim(d.name, d.n); err != nil {
			return "", err
		}
	}
	cell3 := []string{"time", "lev", "nmesh_face"}
	defs := []fieldDef{
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
	if err := defineFields(w, defs, "colbridge demo: invented dynamics state for one day"); err != nil {
		return "", err
	}
	mid := lev.Midpoints()
	for _, c := range []struct {
		name string
		x    []float64
	}{{"time", Hours}, {"lev", mid}, {"ilev", lev.Interfaces}} {
		if err := w.WriteFloat64s(c.name, []int{0}, []int{len(c.x)}, c.x); err != nil {
			return "", err
		}
	}
	for t, h := range Hours {
		st := newState(dyn, lev, h)
		for _, v := range []struct {
			name string
			x    []float64
			n    []int
		}{{"air_density", st.rho, []int{1, nl, nc}}, {"layer_mass", st.mass, []int{1, nl, nc}}, {"theta", st.theta, []int{1, nl + 1, nc}},
			{"tracer", st.tracer, []int{1, nl, nc}}, {"u", st.u, []int{1, nl, ne}}, {"surface_pressure", st.ps, []int{1, nc}}} {
			start := make([]int, len(v.n))
			start[0] = t
			if err := w.WriteFloat64s(v.name, start, v.n, v.x); err != nil {
				return "", err
			}
		}
	}
	return path, w.Commit()
}

// fieldDef is a variable to define: name, dimensions, text attributes.
type fieldDef struct {
	name  string
	dims  []string
	attrs [][2]string
}

// demoFill is the _FillValue of the demo's fields (CF §2.5.1): none are missing, but
// declaring it lets the outputs mark uncovered targets.
const demoFill = 1e20

// defineFields defines the variables (the one named "mesh" as an integer topology
// variable, the others as doubles with _FillValue demoFill), their attributes and the
// global attributes, and ends define mode.
func defineFields(w *ncio.Writer, defs []fieldDef, title string) error {
	for _, d := range defs {
		t := ncio.Float64
		if d.name == "mesh" {
			t = ncio.Int32
		}
		if err := w.DefVar(d.name, t, d.dims); err != nil {
			return err
		}
		for _, a := range d.attrs {
			if err := w.PutAttrText(d.name, a[0], a[1]); err != nil {
				return err
			}
		}
		if len(d.dims) > 1 || (len(d.dims) == 1 && d.dims[0] != "time" && d.dims[0] != "lev" && d.dims[0] != "ilev") {
			if err := w.PutAttrFloat64s(d.name, "_FillValue", demoFill); err != nil {
				return err
			}
		}
	}
	if err := w.PutAttrInt32s("mesh", "topology_dimension", 2); err != nil {
		return err
	}
	for _, g := range [][2]string{{"Conventions", "CF-1.11 UGRID-1.0"}, {"title", title},
		{"history", "written by colbridge demo"}} {
		if err := w.PutAttrText("", g[0], g[1]); err != nil {
			return err
		}
	}
	return w.EndDef()
}
