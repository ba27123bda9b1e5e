package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

// Meshes built for the tests from MeshSpecs: regional patches and perturbed grids that the
// generators do not make.

// rectPlane returns a bounded (non-periodic) planar mesh of nx × ny quadrilaterals covering
// [x0, x0+lx] × [y0, y0+ly]; with jitter > 0, interior vertices move by up to jitter times
// the spacing in each direction (cells stay convex for jitter < 0.25), from the given seed.
func rectPlane(t testing.TB, nx, ny int, x0, y0, lx, ly, jitter float64, seed uint64) *grids.Mesh {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 1))
	dx, dy := lx/float64(nx), ly/float64(ny)
	var verts []r3.Vec
	for j := 0; j <= ny; j++ {
		for i := 0; i <= nx; i++ {
			p := r3.Vec{X: x0 + float64(i)*dx, Y: y0 + float64(j)*dy}
			if jitter > 0 && i > 0 && j > 0 && i < nx && j < ny {
				p.X += jitter * dx * (2*rng.Float64() - 1)
				p.Y += jitter * dy * (2*rng.Float64() - 1)
			}
			verts = append(verts, p)
		}
	}
	return buildQuads(t, grids.MeshSpec{Name: "rect plane", Surface: grids.Plane, Lx: lx, Ly: ly}, verts, nx, ny, nx+1, ny+1, false)
}

// periodicPlane returns a doubly periodic nx × ny quadrilateral mesh on [0, l)², every
// vertex moved by up to jitter times the spacing (then wrapped), from the given seed.
func periodicPlane(t testing.TB, nx, ny int, l, jitter float64, seed uint64) *grids.Mesh {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 2))
	dx, dy := l/float64(nx), l/float64(ny)
	var verts []r3.Vec
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			x := float64(i)*dx + jitter*dx*(2*rng.Float64()-1)
			y := float64(j)*dy + jitter*dy*(2*rng.Float64()-1)
			verts = append(verts, r3.Vec{X: math.Mod(x+l, l), Y: math.Mod(y+l, l)})
		}
	}
	spec := grids.MeshSpec{Name: "periodic plane", Surface: grids.Plane, Lx: l, Ly: l, PeriodicX: true, PeriodicY: true}
	return buildQuads(t, spec, verts, nx, ny, nx, ny, false)
}

// latLonPatch returns a regional latitude–longitude grid of nlon × nlat cells of size
// dlon × dlat degrees from (lon0, lat0), with parallels as edges (as grids.NewLatLon).
func latLonPatch(t testing.TB, lon0, lat0, dlon, dlat float64, nlon, nlat int) *grids.Mesh {
	t.Helper()
	var verts []r3.Vec
	rad := math.Pi / 180
	for j := 0; j <= nlat; j++ {
		for i := 0; i <= nlon; i++ {
			verts = append(verts, sphere.FromLonLat((lon0+float64(i)*dlon)*rad, (lat0+float64(j)*dlat)*rad))
		}
	}
	return buildQuads(t, grids.MeshSpec{Name: "lat-lon patch", Surface: grids.Sphere}, verts, nlon, nlat, nlon+1, nlat+1, true)
}

// buildQuads adds the cells (i, j) → vertices (i, j), (i+1, j), (i+1, j+1), (i, j+1) with
// vertex (i, j) at index (j mod vy)·vx + (i mod vx), counter-clockwise.
func buildQuads(t testing.TB, spec grids.MeshSpec, verts []r3.Vec, nx, ny, vx, vy int, parallels bool) *grids.Mesh {
	t.Helper()
	vid := func(i, j int) int32 { return int32((j%vy)*vx + i%vx) }
	spec.Verts = verts
	spec.CellStart = []int32{0}
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			spec.CellVerts = append(spec.CellVerts, vid(i, j), vid(i+1, j), vid(i+1, j+1), vid(i, j+1))
			if parallels {
				spec.CellEdgeKinds = append(spec.CellEdgeKinds, grids.Parallel, grids.GreatArc, grids.Parallel, grids.GreatArc)
			}
			spec.CellStart = append(spec.CellStart, int32(len(spec.CellVerts)))
		}
	}
	m, err := grids.Build(spec)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func sphereFromLonLatDeg(lon, lat float64) r3.Vec {
	return sphere.FromLonLat(lon*math.Pi/180, lat*math.Pi/180)
}
