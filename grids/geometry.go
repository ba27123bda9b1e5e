package grids

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
	"github.com/colbridge/colbridge/internal/par"
)

// computeGeometry fills the geometry slices, in parallel over cells and edges.
func (m *Mesh) computeGeometry() {
	nc, ne, nv := m.NumCells(), m.NumEdges(), m.NumVerts()
	m.CellArea = make([]float64, nc)
	m.CellCentroid = make([]r3.Vec, nc)
	m.EdgeLength = make([]float64, ne)
	m.EdgeMid = make([]r3.Vec, ne)
	m.EdgeNormal = make([]r3.Vec, ne)
	m.DualArea = make([]float64, nv)

	par.For(ne, 0, 4096, func(lo, hi int) {
		for e := lo; e < hi; e++ {
			m.EdgeLength[e], m.EdgeMid[e], m.EdgeNormal[e] = m.edgeGeometry(e)
		}
	})
	kite := make([]float64, len(m.CellVerts))
	par.For(nc, 0, 2048, func(lo, hi int) {
		var buf [16]r3.Vec
		for c := lo; c < hi; c++ {
			vs := m.cellPoints(c, buf[:0])
			a, g := m.polygonAreaCentroid(c, vs)
			m.CellArea[c], m.CellCentroid[c] = a, g
			m.kites(c, vs, kite)
		}
	})
	par.For(nv, 0, 4096, func(lo, hi int) {
		for v := lo; v < hi; v++ {
			s := 0.0
			for _, h := range m.vertCorners[m.VertStart[v]:m.VertStart[v+1]] {
				s += kite[h]
			}
			m.DualArea[v] = s
		}
	})
}

// cellPoints appends the vertices of cell c to buf; on a periodic plane they are unwrapped
// next to the first vertex.
func (m *Mesh) cellPoints(c int, buf []r3.Vec) []r3.Vec {
	vs := m.CellVertices(c)
	ref := m.Verts[vs[0]]
	for _, v := range vs {
		buf = append(buf, m.Unwrap(m.Verts[v], ref))
	}
	return buf
}

// CellPoints returns the vertex positions of cell c (unwrapped next to the first vertex on
// a periodic plane), appended to buf.
func (m *Mesh) CellPoints(c int, buf []r3.Vec) []r3.Vec { return m.cellPoints(c, buf) }

// cellKind returns the kind of local edge k of cell c.
func (m *Mesh) cellKind(c, k int) EdgeKind {
	if m.EdgeKinds == nil {
		return GreatArc
	}
	return m.EdgeKinds[m.CellEdges[int(m.CellStart[c])+k]]
}

// polygonAreaCentroid returns the area (scaled) and centroid of cell c with points vs.
func (m *Mesh) polygonAreaCentroid(c int, vs []r3.Vec) (float64, r3.Vec) {
	n := len(vs)
	if m.Surface == Plane {
		a, g := planarAreaCentroid(vs)
		return a, m.Wrap(g)
	}
	area := sphere.PolygonArea(vs)
	var mom r3.Vec
	for k := 0; k < n; k++ {
		a, b := vs[k], vs[(k+1)%n]
		if m.cellKind(c, k) == Parallel {
			pm, d := sphere.ParallelCircle(a, b)
			area += sphere.SegmentArea(a, b, pm, d)
			mom = r3.Add(mom, sphere.ArcMoment(a, b, pm, d))
		} else {
			mom = r3.Add(mom, sphere.GreatArcMoment(a, b))
		}
	}
	return area * m.Radius * m.Radius, sphere.Normalize(mom)
}

// CellMoment returns the first moment ∫ x dA of cell c on the unit sphere (a vector of
// length area × |mean position|), or ∫ (x, y) dA on the plane (in the unwrapped frame of
// the cell's first vertex).
func (m *Mesh) CellMoment(c int) r3.Vec {
	var buf [16]r3.Vec
	vs := m.cellPoints(c, buf[:0])
	if m.Surface == Plane {
		a, g := planarAreaCentroid(vs)
		return r3.Scale(a, g)
	}
	var mom r3.Vec
	for k := range vs {
		a, b := vs[k], vs[(k+1)%len(vs)]
		if m.cellKind(c, k) == Parallel {
			pm, d := sphere.ParallelCircle(a, b)
			mom = r3.Add(mom, sphere.ArcMoment(a, b, pm, d))
		} else {
			mom = r3.Add(mom, sphere.GreatArcMoment(a, b))
		}
	}
	return mom
}

// planarAreaCentroid returns the shoelace area and centroid of a polygon, computed
// relative to its first vertex for accuracy.
func planarAreaCentroid(vs []r3.Vec) (float64, r3.Vec) {
	o := vs[0]
	var a2, cx, cy float64
	for k := 1; k+1 < len(vs); k++ {
		x1, y1 := vs[k].X-o.X, vs[k].Y-o.Y
		x2, y2 := vs[k+1].X-o.X, vs[k+1].Y-o.Y
		cr := x1*y2 - x2*y1
		a2 += cr
		cx += cr * (x1 + x2)
		cy += cr * (y1 + y2)
	}
	if a2 == 0 {
		return 0, o
	}
	return a2 / 2, r3.Vec{X: o.X + cx/(3*a2), Y: o.Y + cy/(3*a2)}
}

// edgeGeometry returns the length, midpoint and normal of edge e.
func (m *Mesh) edgeGeometry(e int) (float64, r3.Vec, r3.Vec) {
	a := m.Verts[m.EdgeVerts[e][0]]
	b := m.Verts[m.EdgeVerts[e][1]]
	if m.Surface == Plane {
		b = m.Unwrap(b, a)
		d := r3.Sub(b, a)
		l := math.Hypot(d.X, d.Y)
		mid := m.Wrap(r3.Scale(0.5, r3.Add(a, b)))
		return l, mid, r3.Vec{X: d.Y / l, Y: -d.X / l}
	}
	if m.Kind(e) == Parallel {
		pm, d := sphere.ParallelCircle(a, b)
		theta := sphere.CircleSpan(a, b, pm, d)
		rho := math.Hypot(a.X, a.Y)
		s, c := math.Sincos(theta / 2 * pm.Z) // rotation about +z
		mid := r3.Vec{X: a.X*c - a.Y*s, Y: a.X*s + a.Y*c, Z: a.Z}
		t := sphere.Normalize(r3.Cross(pm, mid))
		n := sphere.Normalize(r3.Cross(t, mid))
		return m.Radius * rho * math.Abs(theta), mid, n
	}
	mid := sphere.Normalize(r3.Add(a, b))
	n := sphere.GreatCircleNormal(a, b)
	return m.Radius * sphere.ArcAngle(a, b), mid, r3.Scale(-1, n)
}

// kites stores, for each corner of cell c, the area of the kite bounded by the corner, the
// midpoints of its two edges and the cell centroid (barycentric dual pieces).
func (m *Mesh) kites(c int, vs []r3.Vec, kite []float64) {
	lo := int(m.CellStart[c])
	n := len(vs)
	g := m.CellCentroid[c]
	if m.Surface == Plane {
		g = m.Unwrap(g, vs[0])
	}
	var mids [16]r3.Vec
	for k := 0; k < n; k++ {
		a, b := vs[k], vs[(k+1)%n]
		if m.Surface == Plane {
			mids[k] = r3.Scale(0.5, r3.Add(a, b))
		} else {
			mids[k] = m.EdgeMid[m.CellEdges[lo+k]]
		}
	}
	for k := 0; k < n; k++ {
		v := vs[k]
		out := mids[k]        // on the edge leaving the corner
		in := mids[(k+n-1)%n] // on the edge entering it
		var a float64
		if m.Surface == Plane {
			// Signed area of the quadrilateral v, out, g, in: half the cross product
			// of its diagonals.
			a = 0.5 * ((g.X-v.X)*(in.Y-out.Y) - (g.Y-v.Y)*(in.X-out.X))
		} else {
			a = sphere.TriangleArea(v, out, g) + sphere.TriangleArea(v, g, in)
			if m.cellKind(c, k) == Parallel {
				pm, d := sphere.ParallelCircle(v, out)
				a += sphere.SegmentArea(v, out, pm, d)
			}
			if m.cellKind(c, (k+n-1)%n) == Parallel {
				pm, d := sphere.ParallelCircle(in, v)
				a += sphere.SegmentArea(in, v, pm, d)
			}
			a *= m.Radius * m.Radius
		}
		kite[lo+k] = a
	}
}

// checkGeometry reports cells that are clockwise or degenerate.
func (m *Mesh) checkGeometry() error {
	total := 0.0
	for _, a := range m.CellArea {
		total += math.Abs(a)
	}
	// A cell smaller than this share of the mean cell is treated as degenerate: no
	// generator or real mesh comes within many orders of magnitude of it (common practice).
	const degenerateShare = 1e-12
	floor := degenerateShare * total / float64(m.NumCells())
	for c, a := range m.CellArea {
		if !(a > floor) {
			if a < 0 {
				return meshErr(c, "is clockwise (signed area %g); cells must be counter-clockwise", a)
			}
			return meshErr(c, "is degenerate (area %g)", a)
		}
	}
	return nil
}
