package remap

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
)

// cvert is a vertex of a polygon being clipped and the edge that leaves it: an edge of the
// subject cell (subject half-edge he) or an edge along a plane of the clipping cell
// (clipping half-edge he). Keeping the edge's origin, not just its end points, lets every
// intersection be computed from mesh data alone, so the same supermesh vertex gets the
// same bits in every overlap that contains it.
type cvert struct {
	p    r3.Vec
	clip bool
	he   int32
}

// sphereClipper intersects cells of a subject mesh with cells of a clipping mesh on the
// unit sphere by Sutherland–Hodgman clipping against the clipping cell's half-planes
// (great circles and parallels), in 3-D with no longitude or latitude arithmetic.
// It is not safe for concurrent use; each worker has its own.
type sphereClipper struct {
	sub, clp *meshGeom
	bufs     [2][]cvert
	side     []float64
	poly     []cvert // the last result
}

// newSphereClipper returns a clipper with buffers for the largest cells of both meshes: a
// convex clip adds at most one vertex per plane, two where a small circle is crossed
// twice.
func newSphereClipper(sub, clp *meshGeom) *sphereClipper {
	n := sub.m.MaxDegree() + 2*clp.m.MaxDegree() + 8
	c := &sphereClipper{sub: sub, clp: clp, side: make([]float64, n)}
	c.bufs[0] = make([]cvert, 0, n)
	c.bufs[1] = make([]cvert, 0, n)
	return c
}

// clip intersects subject cell s with clipping cell t. It returns the overlap's area on
// the unit sphere (zero when they do not overlap) and leaves its polygon in c.poly.
// The clipping cell must be convex in the sense of meshGeom.convex.
func (c *sphereClipper) clip(s, t int) float64 {
	c.poly = nil
	m := c.sub.m
	lo, hi := int(m.CellStart[s]), int(m.CellStart[s+1])
	which := 0
	cur := c.bufs[0][:0]
	for h := lo; h < hi; h++ {
		cur = append(cur, cvert{p: m.Verts[m.CellVerts[h]], he: int32(h)})
	}
	tlo, thi := int(c.clp.cStart[t]), int(c.clp.cStart[t+1])
	// Great circles first: after the clipping cell's meridians have cut the subject down
	// to a wedge, a parallel can no longer lie wholly inside it (a polar cap inside a
	// pole-centred cell would leave a region with no vertices).
	for pass := 0; pass < 2; pass++ {
		for k := tlo; k < thi; k++ {
			pl := c.clp.cPlanes[k]
			if (pl.d == 0) != (pass == 0) {
				continue
			}
			var ok bool
			if cur, ok = c.clipBy(cur, k, pl, &which); !ok {
				return 0
			}
		}
	}
	c.poly = cur
	return c.area(cur)
}

// clipBy clips cur by plane k of the clipping cell; ok is false when nothing is left.
func (c *sphereClipper) clipBy(cur []cvert, k int, pl halfPlane, which *int) ([]cvert, bool) {
	{
		allIn := true
		for i, v := range cur {
			sd := pl.eval(v.p)
			c.side[i] = sd
			allIn = allIn && sd >= 0
		}
		if allIn && !c.mayDoubleCross(cur, pl) {
			return cur, true
		}
		*which ^= 1
		next := c.bufs[*which][:0]
		n := len(cur)
		for i := 0; i < n; i++ {
			j := i + 1
			if j == n {
				j = 0
			}
			u, w := cur[i], cur[j]
			inU, inW := c.side[i] >= 0, c.side[j] >= 0
			if inU {
				next = append(next, u)
			}
			if inU != inW {
				x := c.cross(u, w, c.side[i], c.side[j], k)
				if inU {
					next = append(next, cvert{p: x, clip: true, he: int32(k)})
				} else {
					next = append(next, cvert{p: x, clip: u.clip, he: u.he})
				}
			} else if x1, x2, ok := c.doubleCross(u, w, k); ok {
				if inU {
					next = append(next, cvert{p: x1, clip: true, he: int32(k)}, cvert{p: x2, clip: u.clip, he: u.he})
				} else {
					next = append(next, cvert{p: x1, clip: u.clip, he: u.he}, cvert{p: x2, clip: true, he: int32(k)})
				}
			}
		}
		if len(next) < 3 {
			return nil, false
		}
		return next, true
	}
}

// edgePlane returns the circle of the edge leaving v.
func (c *sphereClipper) edgePlane(v cvert) halfPlane {
	if v.clip {
		return c.clp.cPlanes[v.he]
	}
	return c.sub.planes[v.he]
}

// mayDoubleCross reports whether some edge of the polygon could cross plane pl twice even
// though all its vertices lie inside: only possible when a small circle is involved.
func (c *sphereClipper) mayDoubleCross(poly []cvert, pl halfPlane) bool {
	if pl.d != 0 {
		return true
	}
	for _, v := range poly {
		if c.edgePlane(v).d != 0 {
			return true
		}
	}
	return false
}

// cross returns the point where the edge from u to w crosses plane k of the clipping
// cell, given the signed distances su, sw of opposite signs.
func (c *sphereClipper) cross(u, w cvert, su, sw float64, k int) r3.Vec {
	pl := c.clp.cPlanes[k]
	e := c.edgePlane(u)
	if u.clip {
		// Along the clipping cell's own edge: meeting the next or previous edge of the
		// same cell is that cell's vertex, taken from the mesh. The two circles also meet
		// a second time; when the arc u→w lies on that far side (a subject cell large
		// enough to reach it), the crossing is that other point: exactly −v for two
		// great circles, else from the general computation below.
		v, adjacent := r3.Vec{}, false
		if nk := c.nextHE(int(u.he)); nk == k {
			v, adjacent = c.clp.m.Verts[c.clp.cTo[u.he]], true
		} else if pk := c.nextHE(k); pk == int(u.he) {
			v, adjacent = c.clp.m.Verts[c.clp.cTo[k]], true
		}
		if adjacent {
			// Of the two meeting points of the circles, the one on the arc is nearer the
			// arc's chord midpoint; the other is a quarter circle or more away.
			mid := r3.Add(u.p, w.p)
			if e.d == 0 && pl.d == 0 {
				if r3.Dot(v, mid) >= 0 {
					return v
				}
				return r3.Scale(-1, v)
			}
			if x1, x2, ok := circleCircle(e, pl); !ok || math.Abs(r3.Dot(v, mid)-math.Max(r3.Dot(x1, mid), r3.Dot(x2, mid))) <= 1e-9 {
				return v
			}
		}
	}
	if e.d == 0 && pl.d == 0 {
		if !u.clip {
			// Subject great arc: from its original end points, so every piece of the
			// same mesh edge finds the same point. x = (|s_b| a + |s_a| b)/|…| lies on
			// the arc a→b and on the plane.
			a := c.sub.m.Verts[c.sub.m.CellVerts[u.he]]
			b := c.sub.m.Verts[c.sub.heTo[u.he]]
			sa, sb := pl.eval(a), pl.eval(b)
			if (sa < 0) != (sb < 0) {
				return chordPoint(a, b, sa, sb)
			}
		}
		return chordPoint(u.p, w.p, su, sw)
	}
	x1, x2, ok := circleCircle(e, pl)
	if !ok {
		// The circles coincide or are parallel: the "crossing" is rounding noise of points
		// lying on the plane. Keep the end point nearer to it, which stays on the edge.
		if math.Abs(su) <= math.Abs(sw) {
			return u.p
		}
		return w.p
	}
	// The crossing inside the arc u→w: the root whose position along the edge circle is
	// nearest to the middle of [0, span].
	span := sphere.CircleSpan(u.p, w.p, e.m, e.d)
	f1 := sphere.CircleSpan(u.p, x1, e.m, e.d)
	f2 := sphere.CircleSpan(u.p, x2, e.m, e.d)
	if math.Abs(f1-span/2) <= math.Abs(f2-span/2) {
		return x1
	}
	return x2
}

// doubleCross reports whether the edge u→w, whose ends lie on the same side of plane k,
// crosses it twice, and returns the two points in the order met.
func (c *sphereClipper) doubleCross(u, w cvert, k int) (r3.Vec, r3.Vec, bool) {
	pl := c.clp.cPlanes[k]
	e := c.edgePlane(u)
	if pl.d == 0 && e.d == 0 {
		return r3.Vec{}, r3.Vec{}, false // two great circles meet once along an arc < π
	}
	if u.clip && (c.nextHE(int(u.he)) == k || c.nextHE(k) == int(u.he)) {
		return r3.Vec{}, r3.Vec{}, false // adjacent edges of the clipping cell meet at its vertex
	}
	// Along an arc of a circle of radius ρ the signed distance to a plane is a sinusoid
	// of amplitude ≤ ρ in the arc angle t, so it strays from the straight line between its
	// end values by at most ρΔt²/8 ≤ π²|u−w|²/(32ρ) (Δt ≤ (π/2)|u−w|/ρ for Δt ≤ π). When
	// both ends are farther than that from the plane, there is no double crossing.
	su, sw := math.Abs(pl.eval(u.p)), math.Abs(pl.eval(w.p))
	rho2 := 1 - e.d*e.d
	chord2 := r3.Norm2(r3.Sub(w.p, u.p))
	if b := 0.3085 * chord2; min(su, sw)*min(su, sw)*rho2 > b*b*1.0001 {
		return r3.Vec{}, r3.Vec{}, false
	}
	x1, x2, ok := circleCircle(e, pl)
	if !ok {
		return r3.Vec{}, r3.Vec{}, false
	}
	span := sphere.CircleSpan(u.p, w.p, e.m, e.d)
	f1 := sphere.CircleSpan(u.p, x1, e.m, e.d)
	f2 := sphere.CircleSpan(u.p, x2, e.m, e.d)
	if !(f1 > 0 && f1 < span && f2 > 0 && f2 < span) {
		return r3.Vec{}, r3.Vec{}, false
	}
	if f1 > f2 {
		x1, x2 = x2, x1
	}
	return x1, x2, true
}

// nextHE returns the half-edge after h in its clipping cell.
func (c *sphereClipper) nextHE(h int) int { return int(c.clp.cNext[h]) }

// chordPoint returns the point of the great arc a→b where a plane with signed distances
// sa, sb (opposite signs) crosses it: the normalised chord point (|sb| a + |sa| b). It is
// always between a and b, however nearly parallel the circles are.
func chordPoint(a, b r3.Vec, sa, sb float64) r3.Vec {
	wa, wb := math.Abs(sb), math.Abs(sa)
	x := r3.Vec{X: wa*a.X + wb*b.X, Y: wa*a.Y + wb*b.Y, Z: wa*a.Z + wb*b.Z}
	n := math.Sqrt(r3.Norm2(x))
	if n == 0 {
		return a
	}
	return r3.Scale(1/n, x)
}

// circleCircle returns the two points where the circles m1·x = d1 and m2·x = d2 on the
// unit sphere meet (the line of the two planes cut by the sphere). ok is false when they
// do not meet or are parallel. Negating either plane gives the same two points.
func circleCircle(p1, p2 halfPlane) (x1, x2 r3.Vec, ok bool) {
	cc := r3.Dot(p1.m, p2.m)
	w := r3.Cross(p1.m, p2.m)
	w2 := r3.Norm2(w) // = 1 − cc²
	if w2 < 1e-30 {
		return r3.Vec{}, r3.Vec{}, false
	}
	al := (p1.d - cc*p2.d) / w2
	be := (p2.d - cc*p1.d) / w2
	x0 := r3.Add(r3.Scale(al, p1.m), r3.Scale(be, p2.m))
	t2 := 1 - r3.Norm2(x0)
	if t2 < 0 {
		return r3.Vec{}, r3.Vec{}, false
	}
	t := math.Sqrt(t2 / w2)
	x1 = snapParallel(sphere.Normalize(r3.Add(x0, r3.Scale(t, w))), p1, p2)
	x2 = snapParallel(sphere.Normalize(r3.Sub(x0, r3.Scale(t, w))), p1, p2)
	return x1, x2, true
}

// snapParallel puts x exactly on the parallel of p1 or p2 when one of them is a parallel
// (plane ±z), so points on a latitude line keep its exact z and classify as lying on it.
func snapParallel(x r3.Vec, p1, p2 halfPlane) r3.Vec {
	for _, p := range [2]halfPlane{p1, p2} {
		if p.m.X == 0 && p.m.Y == 0 && p.d != 0 {
			z := p.d * p.m.Z
			h := math.Hypot(x.X, x.Y)
			if h == 0 {
				return x
			}
			r := math.Sqrt(1-z*z) / h
			return r3.Vec{X: x.X * r, Y: x.Y * r, Z: z}
		}
	}
	return x
}

// area returns the area of a clipped polygon on the unit sphere: the great-arc fan plus,
// for every small-circle edge, the exact segment between the circle and its chord.
func (c *sphereClipper) area(poly []cvert) float64 {
	n := len(poly)
	a := 0.0
	p0 := poly[0].p
	for k := 1; k+1 < n; k++ {
		a += sphere.TriangleArea(p0, poly[k].p, poly[k+1].p)
	}
	for k, v := range poly {
		e := c.edgePlane(v)
		if e.d != 0 {
			a += sphere.SegmentArea(v.p, poly[(k+1)%n].p, e.m, e.d)
		}
	}
	return a
}

// moment returns the first moment ∫ x dA of the last clipped polygon, assembled from its
// fan of geodesic triangles (exact area × flat vertex centroid) and its small-circle
// segments (exact area × chord midpoint). Each term is proportional to its own area, so a
// sliver gets a moment as small as its area: the exact boundary form ½∮x×dx sums O(h)
// terms to O(h²) and leaves slivers with an absolute error of ~1e-16, which second-order
// weights divide by h³. The centroid this implies is off by O(h²) relative to the
// piece's size, which keeps second-order maps second order.
func (c *sphereClipper) moment() r3.Vec {
	poly := c.poly
	n := len(poly)
	var mom r3.Vec
	p0 := poly[0].p
	for k := 1; k+1 < n; k++ {
		a, b := poly[k].p, poly[k+1].p
		e := sphere.TriangleArea(p0, a, b)
		f := e / 3
		mom.X += f * (p0.X + a.X + b.X)
		mom.Y += f * (p0.Y + a.Y + b.Y)
		mom.Z += f * (p0.Z + a.Z + b.Z)
	}
	for k, v := range poly {
		e := c.edgePlane(v)
		if e.d != 0 {
			w := poly[(k+1)%n].p
			sa := sphere.SegmentArea(v.p, w, e.m, e.d) / 2
			mom.X += sa * (v.p.X + w.X)
			mom.Y += sa * (v.p.Y + w.Y)
			mom.Z += sa * (v.p.Z + w.Z)
		}
	}
	return mom
}

// polygon appends the last clipped polygon to dst, with the circle of each edge.
func (c *sphereClipper) polygon(dst []PolyVertex) []PolyVertex {
	for _, v := range c.poly {
		e := c.edgePlane(v)
		if e.d == 0 {
			dst = append(dst, PolyVertex{P: v.p})
		} else {
			dst = append(dst, PolyVertex{P: v.p, M: e.m, D: e.d})
		}
	}
	return dst
}
