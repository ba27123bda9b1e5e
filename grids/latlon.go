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
	if s.NLon < 3 || s.NLat < 2 || s.NLon*s.NLat > 1<<28 {
		return nil, fmt.Errorf("lat-lon grid: need nlon ≥ 3 and nlat ≥ 2 (have %d × %d)", s.NLon, s.NLat)
	}
	lon := make([]float64, s.NLon+1)
	for i := range lon {
		lon[i] = s.Lon0 + 360*float64(i)/float64(s.NLon)
	}
	lat := make([]float64, s.NLat+1)
	for j := range lat {
		lat[j] = -90 + 180*float64(j)/float64(s.NLat)
	}
	lat[0], lat[s.NLat] = -90, 90
	m, err := NewLatLonEdges(lon, lat, s.Radius)
	if err != nil {
		return nil, err
	}
	m.Name = fmt.Sprintf("lat-lon %dx%d lon0=%g", s.NLon, s.NLat, s.Lon0)
	return m, nil
}

// NewLatLonEdges returns the latitude–longitude mesh with the given cell edges in degrees,
// both strictly increasing: nlon = len(lon)−1 columns and nlat = len(lat)−1 rows. When
// the longitudes span exactly 360° the grid closes around the globe; otherwise it is a
// regional grid with a boundary. Rows that touch a pole (lat edge ±90) are triangles
// sharing one pole vertex. Numbering as in NewLatLon; with a regional longitude range the
// vertex rows have nlon+1 vertices.
func NewLatLonEdges(lon, lat []float64, radius float64) (*Mesh, error) {
	nlon, nlat := len(lon)-1, len(lat)-1
	if nlon < 1 || nlat < 1 {
		return nil, fmt.Errorf("lat-lon grid: need at least one cell (%d × %d)", nlon, nlat)
	}
	for i := 0; i < nlon; i++ {
		if !(lon[i+1] > lon[i]) {
			return nil, fmt.Errorf("lat-lon grid: longitude edges must increase (%g, %g)", lon[i], lon[i+1])
		}
		if lon[i+1]-lon[i] >= 180 {
			return nil, fmt.Errorf("lat-lon grid: a column %g° wide is too wide (< 180° required)", lon[i+1]-lon[i])
		}
	}
	for j := 0; j < nlat; j++ {
		if !(lat[j+1] > lat[j]) || lat[j] < -90 || lat[j+1] > 90 {
			return nil, fmt.Errorf("lat-lon grid: latitude edges must increase within [-90, 90] (%g, %g)", lat[j], lat[j+1])
		}
	}
	span := lon[nlon] - lon[0]
	global := math.Abs(span-360) <= 1e-9*360
	if span > 360+1e-9*360 {
		return nil, fmt.Errorf("lat-lon grid: longitudes span %g°, more than 360°", span)
	}
	if global && nlon < 3 {
		return nil, fmt.Errorf("lat-lon grid: a global grid needs at least 3 columns")
	}
	southPole, northPole := lat[0] == -90, lat[nlat] == 90
	vlon := nlon + 1
	if global {
		vlon = nlon
	}
	d := math.Pi / 180
	j0, j1 := 0, nlat // vertex rows present
	if southPole {
		j0 = 1
	}
	if northPole {
		j1 = nlat - 1
	}
	verts := make([]r3.Vec, 0, vlon*(j1-j0+1)+2)
	for j := j0; j <= j1; j++ {
		for i := 0; i < vlon; i++ {
			verts = append(verts, sphere.FromLonLat(lon[i]*d, lat[j]*d))
		}
	}
	south, north := int32(-1), int32(-1)
	if southPole {
		south = int32(len(verts))
		verts = append(verts, r3.Vec{Z: -1})
	}
	if northPole {
		north = int32(len(verts))
		verts = append(verts, r3.Vec{Z: 1})
	}
	vid := func(i, j int) int32 {
		switch {
		case j == 0 && southPole:
			return south
		case j == nlat && northPole:
			return north
		}
		if global {
			i %= nlon
		}
		return int32((j-j0)*vlon + i)
	}
	nc := nlon * nlat
	cellStart := make([]int32, nc+1)
	cellVerts := make([]int32, 0, 4*nc)
	kinds := make([]EdgeKind, 0, 4*nc)
	for j := 0; j < nlat; j++ {
		for i := 0; i < nlon; i++ {
			switch {
			case j == 0 && southPole: // pole, NE, NW
				cellVerts = append(cellVerts, south, vid(i+1, 1), vid(i, 1))
				kinds = append(kinds, GreatArc, Parallel, GreatArc)
			case j == nlat-1 && northPole: // SW, SE, pole
				cellVerts = append(cellVerts, vid(i, j), vid(i+1, j), north)
				kinds = append(kinds, Parallel, GreatArc, GreatArc)
			default:
				cellVerts = append(cellVerts, vid(i, j), vid(i+1, j), vid(i+1, j+1), vid(i, j+1))
				kinds = append(kinds, Parallel, GreatArc, Parallel, GreatArc)
			}
			cellStart[j*nlon+i+1] = int32(len(cellVerts))
		}
	}
	if nlat == 1 && southPole && northPole {
		return nil, fmt.Errorf("lat-lon grid: one row from pole to pole is not a valid mesh")
	}
	return Build(MeshSpec{
		Name:    fmt.Sprintf("lat-lon %dx%d", nlon, nlat),
		Surface: Sphere, Radius: radius,
		Verts: verts, CellStart: cellStart, CellVerts: cellVerts, CellEdgeKinds: kinds,
	})
}
