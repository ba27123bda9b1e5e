package grids_test

import (
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/gridtest"
	"github.com/colbridge/colbridge/internal/ncio"
)

// sameMesh reports the first difference between two meshes, comparing every array bit for
// bit (an exact round trip).
func sameMesh(a, b *grids.Mesh) string {
	switch {
	case a.Surface != b.Surface || a.Radius != b.Radius || a.Lx != b.Lx || a.Ly != b.Ly ||
		a.PeriodicX != b.PeriodicX || a.PeriodicY != b.PeriodicY:
		return "surface"
	case !slices.Equal(a.Verts, b.Verts):
		return "vertices"
	case !slices.Equal(a.CellStart, b.CellStart) || !slices.Equal(a.CellVerts, b.CellVerts):
		return "cells"
	case !slices.Equal(a.CellEdges, b.CellEdges) || !slices.Equal(a.EdgeVerts, b.EdgeVerts) || !slices.Equal(a.EdgeCells, b.EdgeCells):
		return "edges"
	case !slices.Equal(a.EdgeKinds, b.EdgeKinds):
		return "edge kinds"
	case !slices.Equal(a.CellArea, b.CellArea) || !slices.Equal(a.CellCentroid, b.CellCentroid):
		return "cell geometry"
	case !slices.Equal(a.EdgeLength, b.EdgeLength) || !slices.Equal(a.EdgeNormal, b.EdgeNormal):
		return "edge geometry"
	case a.Fingerprint() != b.Fingerprint():
		return "fingerprint"
	case a.Name != b.Name:
		return "name"
	}
	return ""
}

// TestUGRIDRoundTrip: every generator's mesh written as UGRID and read back is the same
// mesh bit for bit, passes the contract, and `ncdump -h` (netcdf-bin, the reference
// NetCDF tool) reads the file and sees the UGRID topology attributes.
func TestUGRIDRoundTrip(t *testing.T) {
	dir := t.TempDir()
	makers := map[string]func() (*grids.Mesh, error){
		"cubed":  func() (*grids.Mesh, error) { return grids.NewCubedSphere(5, 0) },
		"icos":   func() (*grids.Mesh, error) { return grids.NewIcosahedral(2, 1) },
		"hex":    func() (*grids.Mesh, error) { return grids.NewIcosahedralDual(2, 0) },
		"latlon": func() (*grids.Mesh, error) { return grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18, Lon0: -180}) },
		"torus": func() (*grids.Mesh, error) {
			return grids.NewPlane(grids.PlaneSpec{NX: 7, NY: 5, Lx: 7e5, Ly: 5e5, PeriodicX: true, PeriodicY: true, Triangles: true})
		},
		"disk": func() (*grids.Mesh, error) { return grids.NewPlane(grids.PlaneSpec{NX: 4, NY: 3, Lx: 4, Ly: 3}) },
		"line": func() (*grids.Mesh, error) { return grids.NewLine(12, 1.2e5, 0) },
		"regional": func() (*grids.Mesh, error) {
			return grids.NewLatLonEdges([]float64{-20, -10, 0, 10}, []float64{30, 40, 50, 60, 70}, 0)
		},
	}
	for name, mk := range makers {
		t.Run(name, func(t *testing.T) {
			m, err := mk()
			if err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(dir, name+".nc")
			if err := grids.WriteUGRID(path, m); err != nil {
				t.Fatal(err)
			}
			r, err := grids.ReadMesh(path)
			if err != nil {
				t.Fatal(err)
			}
			if d := sameMesh(m, r); d != "" {
				t.Errorf("round trip differs in %s", d)
			}
			gridtest.Check(t, r)
			if _, err := exec.LookPath("ncdump"); err != nil {
				t.Skip("ncdump (netcdf-bin) not installed")
			}
			out, err := exec.Command("ncdump", "-h", path).CombinedOutput()
			if err != nil {
				t.Fatalf("ncdump -h: %v\n%s", err, out)
			}
			for _, want := range []string{`cf_role = "mesh_topology"`, `face_node_connectivity = "mesh_face_nodes"`, `Conventions = "CF-1.11 UGRID-1.0"`} {
				if !strings.Contains(string(out), want) {
					t.Errorf("ncdump -h lacks %s", want)
				}
			}
		})
	}
}

// TestReadForeignUGRID: a minimal UGRID file as another tool would write it (1-based
// indices via start_index, clockwise faces, lon/lat nodes only, transposed connectivity,
// no colbridge attributes) is read as the expected mesh: UGRID conventions 1.0.
func TestReadForeignUGRID(t *testing.T) {
	path := filepath.Join(t.TempDir(), "foreign.nc")
	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// The octahedron: 6 nodes, 8 triangular faces (listed clockwise, 1-based).
	lon := []float64{0, 90, 180, -90, 0, 0}
	lat := []float64{0, 0, 0, 0, 90, -90}
	faces := [][3]int32{{1, 5, 2}, {2, 5, 3}, {3, 5, 4}, {4, 5, 1}, {1, 2, 6}, {2, 3, 6}, {3, 4, 6}, {4, 1, 6}}
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(w.DefDim("nNodes", 6))
	must(w.DefDim("nFaces", 8))
	must(w.DefDim("three", 3))
	must(w.DefVar("topo", ncio.Int32, nil))
	must(w.PutAttrText("topo", "cf_role", "mesh_topology"))
	must(w.PutAttrInt32s("topo", "topology_dimension", 2))
	must(w.PutAttrText("topo", "node_coordinates", "lon lat"))
	must(w.PutAttrText("topo", "face_node_connectivity", "fn"))
	must(w.PutAttrText("topo", "face_dimension", "nFaces"))
	must(w.DefVar("lon", ncio.Float64, []string{"nNodes"}))
	must(w.PutAttrText("lon", "units", "degrees_east"))
	must(w.DefVar("lat", ncio.Float64, []string{"nNodes"}))
	must(w.PutAttrText("lat", "units", "degrees_north"))
	must(w.DefVar("fn", ncio.Int32, []string{"three", "nFaces"}))
	must(w.PutAttrInt32s("fn", "start_index", 1))
	must(w.EndDef())
	must(w.WriteFloat64s("lon", nil, nil, lon))
	must(w.WriteFloat64s("lat", nil, nil, lat))
	tr := make([]int32, 24)
	for f, fc := range faces {
		for k := 0; k < 3; k++ {
			tr[k*8+f] = fc[k]
		}
	}
	must(w.WriteInt32s("fn", nil, nil, tr))
	must(w.Commit())
	m, err := grids.ReadMesh(path)
	if err != nil {
		t.Fatal(err)
	}
	if m.NumCells() != 8 || m.NumVerts() != 6 || m.NumEdges() != 12 {
		t.Fatalf("octahedron read as %d cells, %d vertices, %d edges", m.NumCells(), m.NumVerts(), m.NumEdges())
	}
	// Each face is an octant: area πR²/2 (REFERENCES.md, octant triangle π/2).
	for c, a := range m.CellArea {
		if want := math.Pi / 2 * m.Radius * m.Radius; math.Abs(a-want) > 1e-12*want {
			t.Errorf("face %d area %g, want %g", c, a, want)
		}
	}
	gridtest.Check(t, m)
}

// TestReadCFLatLon: a lat–lon grid described only by CF coordinates and bounds (CF
// conventions §7.1, cell boundaries) reads as the same cells as the generator's.
func TestReadCFLatLon(t *testing.T) {
	path := filepath.Join(t.TempDir(), "cf.nc")
	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		t.Fatal(err)
	}
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	nlon, nlat := 24, 12
	must(w.DefDim("lon", nlon))
	must(w.DefDim("lat", nlat))
	must(w.DefDim("nv", 2))
	for _, v := range [][3]string{{"lon", "longitude", "degrees_east"}, {"lat", "latitude", "degrees_north"}} {
		must(w.DefVar(v[0], ncio.Float64, []string{v[0]}))
		must(w.PutAttrText(v[0], "standard_name", v[1]))
		must(w.PutAttrText(v[0], "units", v[2]))
		must(w.PutAttrText(v[0], "bounds", v[0]+"_bnds"))
		must(w.DefVar(v[0]+"_bnds", ncio.Float64, []string{v[0], "nv"}))
	}
	must(w.EndDef())
	lon, lonb := make([]float64, nlon), make([]float64, 2*nlon)
	for i := range lon {
		lon[i] = 7.5 + 15*float64(i)
		lonb[2*i], lonb[2*i+1] = 15*float64(i), 15*float64(i+1)
	}
	lat, latb := make([]float64, nlat), make([]float64, 2*nlat)
	for j := range lat {
		lat[j] = -82.5 + 15*float64(j)
		latb[2*j], latb[2*j+1] = -90+15*float64(j), -75+15*float64(j)
	}
	must(w.WriteFloat64s("lon", nil, nil, lon))
	must(w.WriteFloat64s("lon_bnds", nil, nil, lonb))
	must(w.WriteFloat64s("lat", nil, nil, lat))
	must(w.WriteFloat64s("lat_bnds", nil, nil, latb))
	must(w.Commit())
	m, err := grids.ReadMesh(path)
	if err != nil {
		t.Fatal(err)
	}
	g, err := grids.NewLatLon(grids.LatLonSpec{NLon: nlon, NLat: nlat})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(m.CellArea, g.CellArea) || m.NumEdges() != g.NumEdges() {
		t.Errorf("CF grid differs from the generator's")
	}
	gridtest.Check(t, m)
}

// TestReadMeshErrors: bad files give errors that name the file (and variable), never a
// panic.
func TestReadMeshErrors(t *testing.T) {
	dir := t.TempDir()
	junk := filepath.Join(dir, "junk.nc")
	os.WriteFile(junk, []byte("CDF\x01 this is not really a netcdf file"), 0o644)
	missing := filepath.Join(dir, "missing.nc")
	m, _ := grids.NewCubedSphere(2, 0)
	good := filepath.Join(dir, "good.nc")
	if err := grids.WriteUGRID(good, m); err != nil {
		t.Fatal(err)
	}
	data, _ := os.ReadFile(good)
	trunc := filepath.Join(dir, "trunc.nc")
	os.WriteFile(trunc, data[:len(data)/2], 0o644)
	for _, p := range []string{junk, missing, trunc} {
		_, err := grids.ReadMesh(p)
		if err == nil || !strings.Contains(err.Error(), filepath.Base(p)) {
			t.Errorf("%s: error %v should name the file", filepath.Base(p), err)
		}
	}
}

// FuzzReadMesh: the mesh reader never panics on corrupted files, and whatever it accepts
// passes the mesh contract.
func FuzzReadMesh(f *testing.F) {
	m, _ := grids.NewCubedSphere(1, 0)
	dir := f.TempDir()
	seed := filepath.Join(dir, "seed.nc")
	if err := grids.WriteUGRID(seed, m); err != nil {
		f.Fatal(err)
	}
	data, _ := os.ReadFile(seed)
	f.Add(data)
	f.Fuzz(func(t *testing.T, b []byte) {
		p := filepath.Join(t.TempDir(), "f.nc")
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Skip()
		}
		r, err := grids.ReadMesh(p)
		if err != nil {
			return
		}
		gridtest.Check(t, r)
	})
}
