package remap

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
)

// preparePieces sets up the clipping pieces. Convex cells are their own piece; a
// non-convex cell is split into triangles by ear clipping (on the plane, or on the
// gnomonic projection about its centroid on the sphere, where great arcs are straight),
// each triangle being the intersection of its three half-planes. Triangle sides that are
// cell edges reuse the edge's half-plane, so neighbouring cells still agree exactly.
func (g *meshGeom) preparePieces() error {
	m := g.m
	nc := m.NumCells()
	allConvex := true
	for _, c := range g.convex {
		allConvex = allConvex && c
	}
	g.cellPieces = make([][2]int32, nc)
	if allConvex {
		g.cStart, g.cPlanes, g.cTo, g.cNext = m.CellStart, g.planes, g.heTo, g.heNext
		g.pieceCell = make([]int32, nc)
		for c := range g.cellPieces {
			g.cellPieces[c] = [2]int32{int32(c), int32(c + 1)}
			g.pieceCell[c] = int32(c)
		}
		return nil
	}
	g.cStart = []int32{0}
	var buf [64]r3.Vec
	for c := 0; c < nc; c++ {
		first := int32(len(g.cStart) - 1)
		lo, hi := int(m.CellStart[c]), int(m.CellStart[c+1])
		if g.convex[c] {
			base := int32(len(g.cPlanes))
			deg := int32(hi - lo)
			for h := lo; h < hi; h++ {
				g.cPlanes = append(g.cPlanes, g.planes[h])
				g.cTo = append(g.cTo, g.heTo[h])
				g.cNext = append(g.cNext, base+(int32(h-lo)+1)%deg)
			}
			g.cStart = append(g.cStart, int32(len(g.cPlanes)))
			g.pieceCell = append(g.pieceCell, int32(c))
		} else {
			vs := m.CellPoints(c, buf[:0])
			tris, err := earClip(g, c, vs)
			if err != nil {
				return err
			}
			for _, tr := range tris {
				base := int32(len(g.cPlanes))
				for k := 0; k < 3; k++ {
					i, j := tr[k], tr[(k+1)%3]
					var pl halfPlane
					if j == (i+1)%len(vs) {
						pl = g.planes[lo+i] // a cell edge: reuse its plane
					} else {
						pl = g.linePlane(vs[i], vs[j]) // vs are in the cell frame
					}
					g.cPlanes = append(g.cPlanes, pl)
					g.cTo = append(g.cTo, m.CellVerts[lo+j])
					g.cNext = append(g.cNext, base+int32((k+1)%3))
				}
				g.cStart = append(g.cStart, int32(len(g.cPlanes)))
				g.pieceCell = append(g.pieceCell, int32(c))
			}
		}
		g.cellPieces[c] = [2]int32{first, int32(len(g.cStart) - 1)}
	}
	return nil
}

// linePlane returns the half-plane left of the great arc (or segment) a→b.
func (g *meshGeom) linePlane(a, b r3.Vec) halfPlane {
	if g.sphere {
		return halfPlane{sphere.GreatCircleNormal(a, b), 0}
	}
	dx, dy := b.X-a.X, b.Y-a.Y
	l := math.Hypot(dx, dy)
	n := r3.Vec{X: -dy / l, Y: dx / l}
	return halfPlane{n, n.X*a.X + n.Y*a.Y}
}

// earClip triangulates the counter-clockwise polygon vs (cell c) into triangles of
// local vertex indices. On the sphere it works on the gnomonic projection about the cell
// centroid.
func earClip(g *meshGeom, c int, vs []r3.Vec) ([][3]int, error) {
	n := len(vs)
	xy := make([][2]float64, n)
	if g.sphere {
		cc := g.m.CellCentroid[c]
		e1 := sphere.Normalize(r3.Cross(cc, anyPerp(cc)))
		e2 := r3.Cross(cc, e1)
		for i, v := range vs {
			d := r3.Dot(v, cc)
			if d <= 0 {
				return nil, fmt.Errorf("cell %d spans more than a hemisphere", c)
			}
			xy[i] = [2]float64{r3.Dot(v, e1) / d, r3.Dot(v, e2) / d}
		}
	} else {
		for i, v := range vs {
			xy[i] = [2]float64{v.X, v.Y}
		}
	}
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	cross := func(o, a, b [2]float64) float64 {
		return (a[0]-o[0])*(b[1]-o[1]) - (a[1]-o[1])*(b[0]-o[0])
	}
	var tris [][3]int
	for len(idx) > 3 {
		found := false
		for k := range idx {
			i0, i1, i2 := idx[(k+len(idx)-1)%len(idx)], idx[k], idx[(k+1)%len(idx)]
			if cross(xy[i0], xy[i1], xy[i2]) <= 0 {
				continue // reflex corner
			}
			ear := true
			for _, j := range idx {
				if j == i0 || j == i1 || j == i2 {
					continue
				}
				if cross(xy[i0], xy[i1], xy[j]) >= 0 && cross(xy[i1], xy[i2], xy[j]) >= 0 && cross(xy[i2], xy[i0], xy[j]) >= 0 {
					ear = false
					break
				}
			}
			if ear {
				tris = append(tris, [3]int{i0, i1, i2})
				idx = append(idx[:k], idx[k+1:]...)
				found = true
				break
			}
		}
		if !found {
			return nil, fmt.Errorf("cell %d is not a simple polygon (no ear found while splitting it into convex pieces)", c)
		}
	}
	return append(tris, [3]int{idx[0], idx[1], idx[2]}), nil
}

// anyPerp returns a unit vector not parallel to p.
func anyPerp(p r3.Vec) r3.Vec {
	if math.Abs(p.X) < 0.6 {
		return r3.Vec{X: 1}
	}
	return r3.Vec{Y: 1}
}
