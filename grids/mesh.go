package grids

import (
	"sync"

	"gonum.org/v1/gonum/spatial/r3"
)

// Mesh is a horizontal mesh on the sphere or the plane. See the package documentation for
// the orientation conventions.
//
// The slices are exported for speed and for the packages that build maps; treat a Mesh
// as read-only after Build returns. Connectivity is stored as int32 to halve the memory of
// operational meshes (a cubed sphere with N = 384 has 1.8 million edges).
type Mesh struct {
	// Name is a short human description such as "cubed-sphere N=24".
	Name string

	Surface Surface
	// Radius of the sphere in metres (Sphere only).
	Radius float64
	// Lx and Ly are the domain lengths of a plane (the periods when periodic).
	Lx, Ly               float64
	PeriodicX, PeriodicY bool

	// Verts are unit vectors on the sphere, (x, y, 0) on the plane, with x in [0, Lx)
	// and y in [0, Ly) along periodic directions.
	Verts []r3.Vec

	// Cell c has the vertices CellVerts[CellStart[c]:CellStart[c+1]], counter-clockwise,
	// and the edges CellEdges[CellStart[c]:CellStart[c+1]]; local edge k joins local
	// vertices k and k+1 (mod degree).
	CellStart []int32
	CellVerts []int32
	CellEdges []int32

	// EdgeVerts[e] = {from, to}; EdgeCells[e] = {left, right}, right = -1 on a boundary.
	EdgeVerts [][2]int32
	EdgeCells [][2]int32
	// EdgeKinds[e] is the curve of edge e; nil means every edge is a GreatArc.
	EdgeKinds []EdgeKind

	// The cells around vertex v are VertCells[VertStart[v]:VertStart[v+1]], in
	// counter-clockwise order.
	VertStart []int32
	VertCells []int32

	// Geometry, in metres and square metres on the sphere (radius applied) and in the
	// plane's own units on the plane.
	CellArea []float64
	// CellCentroid is the direction of the cell's first moment on the sphere (a unit
	// vector), the area centroid on the plane (wrapped into the domain when periodic).
	CellCentroid []r3.Vec
	EdgeLength   []float64
	// EdgeMid is the midpoint of the edge (on the arc: the unit vector halfway along it).
	EdgeMid []r3.Vec
	// EdgeNormal is the unit normal at EdgeMid, tangent to the surface, pointing from
	// EdgeCells[e][0] to EdgeCells[e][1].
	EdgeNormal []r3.Vec
	// DualArea is the barycentric dual area of each vertex.
	DualArea []float64

	// vertCorners parallels VertCells: the index into CellVerts of each corner.
	vertCorners []int32

	fpOnce sync.Once
	fp     string
}

// NumCells returns the number of cells.
func (m *Mesh) NumCells() int { return len(m.CellStart) - 1 }

// NumEdges returns the number of edges.
func (m *Mesh) NumEdges() int { return len(m.EdgeVerts) }

// NumVerts returns the number of vertices.
func (m *Mesh) NumVerts() int { return len(m.Verts) }

// CellVertices returns the vertex indices of cell c, counter-clockwise. The slice aliases
// the mesh; do not modify it.
func (m *Mesh) CellVertices(c int) []int32 { return m.CellVerts[m.CellStart[c]:m.CellStart[c+1]] }

// CellEdgeList returns the edge indices of cell c; edge k joins vertices k and k+1.
func (m *Mesh) CellEdgeList(c int) []int32 { return m.CellEdges[m.CellStart[c]:m.CellStart[c+1]] }

// VertexCells returns the cells around vertex v in counter-clockwise order.
func (m *Mesh) VertexCells(v int) []int32 { return m.VertCells[m.VertStart[v]:m.VertStart[v+1]] }

// Kind returns the curve of edge e.
func (m *Mesh) Kind(e int) EdgeKind {
	if m.EdgeKinds == nil {
		return GreatArc
	}
	return m.EdgeKinds[e]
}

// EdgeSign reports the orientation of edge e seen from cell c: +1 when EdgeNormal[e] points
// out of c, -1 when it points in. It panics if c is not a cell of e.
func (m *Mesh) EdgeSign(c, e int) float64 {
	switch int32(c) {
	case m.EdgeCells[e][0]:
		return 1
	case m.EdgeCells[e][1]:
		return -1
	}
	panic("grids: EdgeSign: cell is not on the edge")
}

// MaxDegree returns the largest number of vertices of any cell.
func (m *Mesh) MaxDegree() int {
	d := 0
	for c := 0; c < m.NumCells(); c++ {
		d = max(d, int(m.CellStart[c+1]-m.CellStart[c]))
	}
	return d
}

// Scale returns the factor that turns unit-sphere lengths into metres: the radius on the
// sphere, 1 on the plane.
func (m *Mesh) Scale() float64 {
	if m.Surface == Sphere {
		return m.Radius
	}
	return 1
}

// TotalArea returns the compensated sum of the cell areas.
func (m *Mesh) TotalArea() float64 { return compensatedSum(m.CellArea) }

// Unwrap returns p moved by whole periods so that it lies nearest to ref (minimum image).
// On the sphere and along non-periodic directions it returns p.
func (m *Mesh) Unwrap(p, ref r3.Vec) r3.Vec {
	if m.Surface != Plane {
		return p
	}
	if m.PeriodicX {
		p.X = ref.X + wrapHalf(p.X-ref.X, m.Lx)
	}
	if m.PeriodicY {
		p.Y = ref.Y + wrapHalf(p.Y-ref.Y, m.Ly)
	}
	return p
}

// Wrap returns p moved by whole periods into [0, Lx) × [0, Ly) along periodic directions.
func (m *Mesh) Wrap(p r3.Vec) r3.Vec {
	if m.Surface != Plane {
		return p
	}
	if m.PeriodicX {
		p.X = wrapInto(p.X, m.Lx)
	}
	if m.PeriodicY {
		p.Y = wrapInto(p.Y, m.Ly)
	}
	return p
}

// wrapHalf returns d shifted by a multiple of l into [-l/2, l/2).
func wrapHalf(d, l float64) float64 {
	if d >= -l/2 && d < l/2 {
		return d
	}
	d -= l * floor(d/l+0.5)
	return d
}

// wrapInto returns x shifted by a multiple of l into [0, l).
func wrapInto(x, l float64) float64 {
	if x >= 0 && x < l {
		return x
	}
	x -= l * floor(x/l)
	if x >= l { // rounding of a tiny negative x
		x = 0
	}
	return x
}
