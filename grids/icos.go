package grids

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
)

// icosahedron returns the 12 vertices and 20 counter-clockwise faces of the regular
// icosahedron, rotated so that vertex 0 is the north pole and vertex 11 the south pole.
func icosahedron() ([]r3.Vec, [][3]int32) {
	phi := (1 + math.Sqrt(5)) / 2
	raw := []r3.Vec{
		{X: 0, Y: 1, Z: phi}, {X: 0, Y: -1, Z: phi}, {X: 1, Y: phi, Z: 0}, {X: -1, Y: phi, Z: 0},
		{X: phi, Y: 0, Z: 1}, {X: -phi, Y: 0, Z: 1}, {X: phi, Y: 0, Z: -1}, {X: -phi, Y: 0, Z: -1},
		{X: 1, Y: -phi, Z: 0}, {X: -1, Y: -phi, Z: 0}, {X: 0, Y: 1, Z: -phi}, {X: 0, Y: -1, Z: -phi},
	}
	// Rotate about x by a = atan(1/phi): (0, 1, phi) goes to the pole.
	s, c := math.Sincos(math.Atan(1 / phi))
	verts := make([]r3.Vec, len(raw))
	for i, p := range raw {
		q := r3.Vec{X: p.X, Y: p.Y*c - p.Z*s, Z: p.Y*s + p.Z*c}
		verts[i] = sphere.Normalize(q)
	}
	verts[0] = r3.Vec{Z: 1}
	verts[11] = r3.Vec{Z: -1}
	// Faces: every triple of mutually adjacent vertices (edge length 2 before scaling).
	var faces [][3]int32
	adj := func(i, j int) bool { return r3.Norm2(r3.Sub(raw[i], raw[j])) < 4.5 }
	for i := 0; i < 12; i++ {
		for j := i + 1; j < 12; j++ {
			for k := j + 1; k < 12; k++ {
				if adj(i, j) && adj(j, k) && adj(i, k) {
					f := [3]int32{int32(i), int32(j), int32(k)}
					if r3.Dot(verts[i], r3.Cross(verts[j], verts[k])) < 0 {
						f[1], f[2] = f[2], f[1]
					}
					faces = append(faces, f)
				}
			}
		}
	}
	return verts, faces
}

// NewIcosahedral returns the icosahedral triangular mesh of the given level: the
// icosahedron with every triangle split into four level times, new vertices at the
// normalised edge midpoints. It has 20·4^level cells, 30·4^level edges and 10·4^level + 2
// vertices; vertices 0 and 11 are the poles. radius ≤ 0 means EarthRadius.
func NewIcosahedral(level int, radius float64) (*Mesh, error) {
	if level < 0 || level > 11 {
		return nil, fmt.Errorf("icosahedral mesh: level %d outside [0, 11]", level)
	}
	verts, faces := icosahedron()
	for l := 0; l < level; l++ {
		mids := make(map[uint64]int32, 3*len(faces)/2)
		mid := func(a, b int32) int32 {
			lo, hi := min(a, b), max(a, b)
			key := uint64(lo)<<32 | uint64(hi)
			if id, ok := mids[key]; ok {
				return id
			}
			id := int32(len(verts))
			verts = append(verts, sphere.Normalize(r3.Add(verts[a], verts[b])))
			mids[key] = id
			return id
		}
		next := make([][3]int32, 0, 4*len(faces))
		for _, f := range faces {
			ab, bc, ca := mid(f[0], f[1]), mid(f[1], f[2]), mid(f[2], f[0])
			next = append(next,
				[3]int32{f[0], ab, ca}, [3]int32{ab, f[1], bc},
				[3]int32{ca, bc, f[2]}, [3]int32{ab, bc, ca})
		}
		faces = next
	}
	cellStart := make([]int32, len(faces)+1)
	cellVerts := make([]int32, 0, 3*len(faces))
	for c, f := range faces {
		cellVerts = append(cellVerts, f[0], f[1], f[2])
		cellStart[c+1] = int32(3 * (c + 1))
	}
	return Build(MeshSpec{
		Name: fmt.Sprintf("icosahedral triangles level %d", level), Surface: Sphere, Radius: radius,
		Verts: verts, CellStart: cellStart, CellVerts: cellVerts,
	})
}

// NewIcosahedralDual returns the hexagonal–pentagonal dual of the icosahedral mesh of the
// given level: one cell per triangle vertex (exactly 12 pentagons, the rest hexagons), whose
// vertices are the circumcentres of the surrounding triangles, so its edges cross the
// triangle edges at right angles (a Voronoi mesh). It has 10·4^level + 2 cells; cell v of
// the dual is centred on vertex v of the triangles, cells 0 and 11 on the poles.
func NewIcosahedralDual(level int, radius float64) (*Mesh, error) {
	tri, err := NewIcosahedral(level, radius)
	if err != nil {
		return nil, err
	}
	return Dual(tri, fmt.Sprintf("icosahedral hexagons level %d", level))
}

// Dual returns the Voronoi-type dual of a closed spherical triangle mesh: a cell per
// vertex, with the circumcentres of the triangles around it as its vertices.
func Dual(tri *Mesh, name string) (*Mesh, error) {
	if tri.Surface != Sphere {
		return nil, fmt.Errorf("dual mesh: only spherical triangle meshes are supported")
	}
	verts := make([]r3.Vec, tri.NumCells())
	for c := range verts {
		v := tri.CellVertices(c)
		if len(v) != 3 {
			return nil, fmt.Errorf("dual mesh: cell %d is not a triangle", c)
		}
		a, b, cc := tri.Verts[v[0]], tri.Verts[v[1]], tri.Verts[v[2]]
		verts[c] = sphere.Normalize(r3.Cross(r3.Sub(b, a), r3.Sub(cc, a)))
	}
	cellStart := make([]int32, tri.NumVerts()+1)
	cellVerts := make([]int32, 0, len(tri.VertCells))
	for v := 0; v < tri.NumVerts(); v++ {
		around := tri.VertexCells(v)
		if len(around) < 3 || tri.EdgeCells[0][1] < 0 {
			return nil, fmt.Errorf("dual mesh: vertex %d is on a boundary or has fewer than 3 cells", v)
		}
		cellVerts = append(cellVerts, around...)
		cellStart[v+1] = int32(len(cellVerts))
	}
	return Build(MeshSpec{
		Name: name, Surface: Sphere, Radius: tri.Radius,
		Verts: verts, CellStart: cellStart, CellVerts: cellVerts,
	})
}
