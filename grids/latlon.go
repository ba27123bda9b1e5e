package grids

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
)

// LatLonSpec describes a regular latitude–longitude grid.
type LatLonSpec struct {
	NLon, NLat int
	// Lon0 is the western edge of the first column, in degrees.
	Lon0 float64
	// Radius of the sphere; ≤ 0 means EarthRadius.
	Radius float64
}

// NewLatLon returns the regular latitude–longitude grid of nlon × nlat cells whose edges
// are meridians (great circles) and parallels (constant latitude, kind Parallel), so cell
// areas are exactly R²Δλ(sin φ₂ − sin φ₁).
//
// Pole rows: the cells touching a pole are triangles that share a single pole vertex; the
// zero-length pole edges do not exist. So the grid has nlon·nlat cells,
// nlon·(nlat−1) + 2 vertices and nlon·(2·nlat−1) edges, and is a closed sphere
// (V − E + F = 2).
//
// Numbering: cell (i, j), column i eastward from Lon0 and row j northward from the south
// pole, has index j·nlon + i; vertex (i, j) on the interior parallel j = 1..nlat−1 has
// index (j−1)·nlon + i; then the south pole, then the north pole.
func NewLatLon(s LatLonSpec) (*Mesh, error) {
	nlon, nlat := s.NLon, s.NLat
	if nlon < 3 || nlat < 2 || nlon*nlat > 1<<28 {
		return nil, fmt.Errorf("lat-lon grid: need nlon ≥ 3 and nlat ≥ 2 (have %d × %d)", nlon, nlat)
	}
	dlon := 2 * math.Pi / float64(nlon)
	dlat := math.Pi / float64(nlat)
	lon0 := s.Lon0 * math.Pi / 180
	verts := make([]r3.Vec, 0, nlon*(nlat-1)+2)
	for j := 1; j < nlat; j++ {
		lat := -math.Pi/2 + float64(j)*dlat
		for i := 0; i < nlon; i++ {
			verts = append(verts, sphere.FromLonLat(lon0+float64(i)*dlon, lat))
		}
	}
	south, north := int32(len(verts)), int32(len(verts)+1)
	verts = append(verts, r3.Vec{Z: -1}, r3.Vec{Z: 1})
	vid := func(i, j int) int32 { // j in 0..nlat
		switch j {
		case 0:
			return south
		case nlat:
			return north
		}
		return int32((j-1)*nlon + i%nlon)
	}
	nc := nlon * nlat
	cellStart := make([]int32, nc+1)
	cellVerts := make([]int32, 0, 4*nc)
	kinds := make([]EdgeKind, 0, 4*nc)
	for j := 0; j < nlat; j++ {
		for i := 0; i < nlon; i++ {
			switch j {
			case 0: // pole, NE, NW
				cellVerts = append(cellVerts, south, vid(i+1, 1), vid(i, 1))
				kinds = append(kinds, GreatArc, Parallel, GreatArc)
			case nlat - 1: // SW, SE, pole
				cellVerts = append(cellVerts, vid(i, j), vid(i+1, j), north)
				kinds = append(kinds, Parallel, GreatArc, GreatArc)
			default:
				cellVerts = append(cellVerts, vid(i, j), vid(i+1, j), vid(i+1, j+1), vid(i, j+1))
				kinds = append(kinds, Parallel, GreatArc, Parallel, GreatArc)
			}
			cellStart[j*nlon+i+1] = int32(len(cellVerts))
		}
	}
	return Build(MeshSpec{
		Name:    fmt.Sprintf("lat-lon %dx%d lon0=%g", nlon, nlat, s.Lon0),
		Surface: Sphere, Radius: s.Radius,
		Verts: verts, CellStart: cellStart, CellVerts: cellVerts, CellEdgeKinds: kinds,
	})
}
