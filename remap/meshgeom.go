package remap

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
	"github.com/colbridge/colbridge/internal/par"
)

// halfPlane is the region {x : m·x ≥ d}. On the sphere its boundary is the circle m·x = d
// (d = 0: a great circle), on the plane the line m·x = d (m.Z = 0).
type halfPlane struct {
	m r3.Vec
	d float64
}

func (h halfPlane) eval(x r3.Vec) float64 { return h.m.X*x.X + h.m.Y*x.Y + h.m.Z*x.Z - h.d }

// meshGeom is what the overlap engine needs of a mesh, precomputed once: for every cell
// corner (half-edge h, the edge leaving CellVerts[h]) the half-plane of that edge with the
// cell on its inner side, the vertex the edge runs to, and for every cell a bounding cap
// (sphere) or box (plane).
//
// The half-plane of an edge is computed once per edge and negated for the second cell, so
// the two cells of an edge classify every point consistently (IEEE negation is exact): no
// piece of overlap is counted twice or lost between them.
type meshGeom struct {
	m      *grids.Mesh
	sphere bool
	planes []halfPlane // per half-edge
	heTo   []int32     // per half-edge: the vertex the edge runs to
	heNext []int32     // per half-edge: the next half-edge of its cell
	// Bounding cap (sphere): centre direction and angular radius as cos/sin; box (plane):
	// centre and half-extent in x and y (unwrapped about the first vertex).
	capC         []r3.Vec
	capCos       []float64
	capSin       []float64
	boxC, boxH   []r3.Vec
	maxCapRadius float64
	// convex[c] is false for cells that are not the intersection of their edge
	// half-planes; those are split into triangles when they act as the clipping cell.
	convex []bool

	// Clipping pieces: the convex regions a cell is clipped against. Piece p has the
	// half-planes cPlanes[cStart[p]:cStart[p+1]] (with cTo and cNext as for half-edges);
	// the pieces of cell c are cellPieces[c][0] .. cellPieces[c][1]−1. For a mesh of
	// convex cells (the usual case) the pieces are the cells and these slices alias the
	// half-edge ones.
	cStart     []int32
	cPlanes    []halfPlane
	cTo, cNext []int32
	cellPieces [][2]int32
	// pieceCell maps a piece to its cell.
	pieceCell []int32
}

func newMeshGeom(m *grids.Mesh) *meshGeom {
	g := &meshGeom{m: m, sphere: m.Surface == grids.Sphere}
	nh := len(m.CellVerts)
	g.planes = make([]halfPlane, nh)
	g.heTo = make([]int32, nh)
	g.heNext = make([]int32, nh)
	edgePlane := make([]halfPlane, m.NumEdges())
	par.For(len(edgePlane), 0, 4096, func(elo, ehi int) {
		for e := elo; e < ehi; e++ {
			edgePlane[e] = edgeHalfPlane(m, g.sphere, e)
		}
	})
	nc := m.NumCells()
	g.convex = make([]bool, nc)
	if g.sphere {
		g.capC = make([]r3.Vec, nc)
		g.capCos = make([]float64, nc)
		g.capSin = make([]float64, nc)
	} else {
		g.boxC = make([]r3.Vec, nc)
		g.boxH = make([]r3.Vec, nc)
	}
	maxR := make([]float64, nc)
	par.For(nc, 0, 2048, func(clo, chi int) {
		var buf [32]r3.Vec
		for c := clo; c < chi; c++ {
			maxR[c] = g.cellGeom(c, edgePlane, buf[:0])
		}
	})
	for _, r := range maxR {
		g.maxCapRadius = math.Max(g.maxCapRadius, r)
	}
	return g
}

// edgeHalfPlane returns the half-plane left of edge e as stored (from its first vertex to
// its second); on the plane in the frame of the edge's first vertex.
func edgeHalfPlane(m *grids.Mesh, onSphere bool, e int) halfPlane {
	{
		a, b := m.Verts[m.EdgeVerts[e][0]], m.Verts[m.EdgeVerts[e][1]]
		if onSphere {
			if m.Kind(e) == grids.Parallel {
				pm, d := sphere.ParallelCircle(a, b)
				return halfPlane{pm, d}
			}
			return halfPlane{sphere.GreatCircleNormal(a, b), 0}
		}
		b = m.Unwrap(b, a)
		dx, dy := b.X-a.X, b.Y-a.Y
		l := math.Hypot(dx, dy)
		n := r3.Vec{X: -dy / l, Y: dx / l} // left normal
		return halfPlane{n, n.X*a.X + n.Y*a.Y}
	}
}

// cellGeom fills the per-half-edge and per-cell data of cell c and returns its cap radius.
func (g *meshGeom) cellGeom(c int, edgePlane []halfPlane, buf []r3.Vec) float64 {
	m := g.m
	{
		lo, hi := int(m.CellStart[c]), int(m.CellStart[c+1])
		for h := lo; h < hi; h++ {
			nxt := h + 1
			if nxt == hi {
				nxt = lo
			}
			g.heTo[h] = m.CellVerts[nxt]
			g.heNext[h] = int32(nxt)
			e := m.CellEdges[h]
			p := edgePlane[e]
			if m.EdgeCells[e][0] != int32(c) {
				p = halfPlane{r3.Scale(-1, p.m), -p.d}
			}
			if !g.sphere {
				// Lines are stored in the frame of the edge's first vertex; re-express
				// in the cell's frame (its first vertex) for periodic planes.
				a := m.Verts[m.EdgeVerts[e][0]]
				ref := m.Verts[m.CellVerts[lo]]
				au := m.Unwrap(a, ref)
				p.d += p.m.X*(au.X-a.X) + p.m.Y*(au.Y-a.Y)
			}
			g.planes[h] = p
		}
		vs := m.CellPoints(c, buf)
		g.convex[c] = isConvex(g, lo, vs)
		if g.sphere {
			cc := m.CellCentroid[c]
			minDot := 1.0
			for _, v := range vs {
				minDot = math.Min(minDot, r3.Dot(cc, v))
			}
			// Points along an edge are no farther from the centroid than its ends or its
			// midpoint (distance along a circle arc from a point off it is unimodal).
			for h := lo; h < hi; h++ {
				minDot = math.Min(minDot, r3.Dot(cc, m.EdgeMid[m.CellEdges[h]]))
			}
			// Widen by a few ulps so boundary contacts are never rejected.
			r := math.Acos(math.Max(-1, math.Min(1, minDot))) + 1e-12
			g.capC[c] = cc
			g.capSin[c], g.capCos[c] = math.Sincos(math.Min(r, math.Pi))
			return r
		} else {
			lo3, hi3 := vs[0], vs[0]
			for _, v := range vs {
				lo3 = r3.Vec{X: math.Min(lo3.X, v.X), Y: math.Min(lo3.Y, v.Y)}
				hi3 = r3.Vec{X: math.Max(hi3.X, v.X), Y: math.Max(hi3.Y, v.Y)}
			}
			g.boxC[c] = r3.Scale(0.5, r3.Add(lo3, hi3))
			g.boxH[c] = r3.Scale(0.5, r3.Sub(hi3, lo3))
		}
	}
	return 0
}

// isConvex reports whether every vertex of the cell lies inside the half-planes of all its
// edges (then the cell is the intersection of those half-planes). Parallel edges of
// latitude–longitude cells count: such a cell is exactly the intersection of its four
// half-planes even though its poleward edge is not geodesically convex.
func isConvex(g *meshGeom, lo int, vs []r3.Vec) bool {
	const tol = 1e-12 // relative to unit vectors / cell size; rounding only
	scale := 1.0
	if !g.sphere {
		d := r3.Sub(vs[1], vs[0])
		scale = math.Hypot(d.X, d.Y)
	}
	for k := range vs {
		p := g.planes[lo+k]
		for j, v := range vs {
			if j == k || j == (k+1)%len(vs) {
				continue
			}
			if p.eval(v) < -tol*scale {
				return false
			}
		}
	}
	return true
}

// capsMeet reports whether the bounding caps of source cell s and target cell t can
// overlap: angle(c_s, c_t) ≤ r_s + r_t, tested as cos(angle) ≥ cos(r_s + r_t).
func capsMeet(a *meshGeom, s int, b *meshGeom, t int) bool {
	cosSum := a.capCos[s]*b.capCos[t] - a.capSin[s]*b.capSin[t]
	if a.capSin[s]*b.capCos[t]+a.capCos[s]*b.capSin[t] < 0 { // r_s + r_t > π
		return true
	}
	return r3.Dot(a.capC[s], b.capC[t]) >= cosSum
}
