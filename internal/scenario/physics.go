package scenario

import (
	"fmt"
	"math"
	"path/filepath"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// IncrementsFile is the name of the physics increments the demo writes on the columns.
const IncrementsFile = "physics_increments.nc"

// PhysicsStep is the length of the demo's physics step, in seconds.
const PhysicsStep = 1800.0

// Physics computes one step of Held & Suarez (1994) forcing on the columns — Newtonian
// relaxation of temperature towards their radiative-equilibrium profile and Rayleigh drag
// in the boundary layer — from the restricted state in statePath, and writes the
// increments of theta, u_east and u_north into dir/IncrementsFile (same layout and times,
// on the column mesh). Pressure at the layer midpoints is the standard atmosphere's scaled
// by the column's surface pressure (a demo's simplification), σ = p/p_s.
func Physics(statePath, dir string, cols *grids.Mesh, lev *grids.Levels) (string, error) {
	in, err := ncio.Open(statePath)
	if err != nil {
		return "", err
	}
	defer in.Close()
	nl, nc := lev.NLev(), cols.NumCells()
	theta, err := readAll(in, "theta", nl*nc)
	if err != nil {
		return "", err
	}
	ue, err := readAll(in, "u_east", nl*nc)
	if err != nil {
		return "", err
	}
	un, err := readAll(in, "u_north", nl*nc)
	if err != nil {
		return "", err
	}
	ps, err := readAll(in, "surface_pressure", nc)
	if err != nil {
		return "", err
	}
	nt := len(ps) / nc
	mid := lev.Midpoints()
	sigma := make([]float64, nl)
	for k, z := range mid {
		_, p, _ := analytic.StdAtmosphere(z)
		sigma[k] = p / analytic.StdP0
	}
	hs := analytic.HeldSuarez1994
	dth := make([]float64, len(theta))
	due := make([]float64, len(ue))
	dun := make([]float64, len(un))
	for t := 0; t < nt; t++ {
		for c := 0; c < nc; c++ {
			_, lat := analytic.LonLat(cols.CellCentroid[c])
			for k := 0; k < nl; k++ {
				i := (t*nl+k)*nc + c
				p := sigma[k] * ps[t*nc+c]
				exner := math.Pow(p/analytic.StdP0, kappa)
				temp := theta[i] * exner
				dT := -hs.ThermalRate(sigma[k], lat) * (temp - hs.EquilibriumTemperature(p, lat))
				dth[i] = PhysicsStep * dT / exner
				kv := hs.DragRate(sigma[k])
				due[i] = -PhysicsStep * kv * ue[i]
				dun[i] = -PhysicsStep * kv * un[i]
			}
		}
	}
	times, err := readAll(in, "time", nt)
	if err != nil {
		return "", err
	}

	path := filepath.Join(dir, IncrementsFile)
	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		return "", err
	}
	defer w.Abort()
	for _, d := range []struct {
		name string
		n    int
	}{{"time", 0}, {"lev", nl}, {"nmesh_face", nc}} {
		if err := w.DefDim(d.name, d.n); err != nil {
			return "", err
		}
	}
	cell3 := []string{"time", "lev", "nmesh_face"}
	step := fmt.Sprintf("increment over one physics step of %.0f s (Held & Suarez 1994 forcing)", PhysicsStep)
	defs := []fieldDef{
		{"mesh", nil, [][2]string{{"cf_role", "mesh_topology"}, {"long_name", "physics columns (geometry in the columns' mesh file)"},
			{"face_dimension", "nmesh_face"}, {"colbridge_name", cols.Name}, {"colbridge_fingerprint", cols.Fingerprint()}}},
		{"time", []string{"time"}, [][2]string{{"standard_name", "time"}, {"units", "hours since 2000-01-01 00:00:00"}, {"calendar", "standard"}}},
		{"lev", []string{"lev"}, [][2]string{{"standard_name", "height"}, {"units", "m"}, {"positive", "up"}, {"axis", "Z"}}},
		{"theta", cell3, [][2]string{{"long_name", "potential temperature " + step}, {"units", "K"}, {"mesh", "mesh"}, {"location", "face"}}},
		{"u_east", cell3, [][2]string{{"long_name", "eastward wind " + step}, {"units", "m s-1"}, {"mesh", "mesh"}, {"location", "face"}}},
		{"u_north", cell3, [][2]string{{"long_name", "northward wind " + step}, {"units", "m s-1"}, {"mesh", "mesh"}, {"location", "face"}}},
	}
	if err := defineFields(w, defs, "colbridge demo: physics increments on the columns"); err != nil {
		return "", err
	}
	if err := w.WriteFloat64s("lev", nil, nil, mid); err != nil {
		return "", err
	}
	if err := w.WriteFloat64s("time", []int{0}, []int{nt}, times); err != nil {
		return "", err
	}
	for _, v := range []struct {
		name string
		x    []float64
	}{{"theta", dth}, {"u_east", due}, {"u_north", dun}} {
		if err := w.WriteFloat64s(v.name, []int{0, 0, 0}, []int{nt, nl, nc}, v.x); err != nil {
			return "", err
		}
	}
	return path, w.Commit()
}

// readAll reads a whole variable of f; its size must be a multiple of per.
func readAll(f *ncio.File, name string, per int) ([]float64, error) {
	v, err := f.Var(name)
	if err != nil {
		return nil, err
	}
	n := 1
	for _, s := range v.Shape {
		n *= s
	}
	if n%per != 0 {
		return nil, fmt.Errorf("%s: variable %q has %d values, not a multiple of %d", f.Path(), name, n, per)
	}
	x := make([]float64, n)
	return x, f.ReadFloat64s(name, nil, nil, x)
}
