package remap

import (
	"gonum.org/v1/gonum/spatial/r3"
)

// planeClipper intersects cells of two planar meshes (periodic or not) by Sutherland–
// Hodgman clipping of the subject cell against the half-planes of the clipping cell. All
// coordinates are taken in the frame of the subject cell's first vertex; the clipping
// cell is shifted by whole periods next to it.
type planeClipper struct {
	sub, clp *meshGeom
	bufs     [2][]cvert
	side     []float64
	shift    r3.Vec // added to clipping-cell coordinates to bring them next to the subject
	poly     []cvert
	ref      r3.Vec // subject frame origin (its first vertex)
}

func newPlaneClipper(sub, clp *meshGeom) *planeClipper {
	n := sub.m.MaxDegree() + 2*clp.m.MaxDegree() + 8
	c := &planeClipper{sub: sub, clp: clp, side: make([]float64, n)}
	c.bufs[0] = make([]cvert, 0, n)
	c.bufs[1] = make([]cvert, 0, n)
	return c
}

// clip intersects subject cell s with clipping cell t and returns the area of the overlap
// (zero when none), leaving its polygon in c.poly in the subject's frame.
func (c *planeClipper) clip(s, t int) float64 {
	c.poly = nil
	m := c.sub.m
	lo, hi := int(m.CellStart[s]), int(m.CellStart[s+1])
	c.ref = m.Verts[m.CellVerts[lo]]
	cm := c.clp.m
	tlo, thi := int(c.clp.cStart[t]), int(c.clp.cStart[t+1])
	// Planes of t are expressed in t's frame (its first vertex); move that frame next to
	// the subject.
	tcell := c.clp.pieceCell[t]
	tref := cm.Verts[cm.CellVerts[cm.CellStart[tcell]]]
	tu := cm.Unwrap(tref, c.ref)
	c.shift = r3.Sub(tu, tref)
	which := 0
	cur := c.bufs[0][:0]
	for h := lo; h < hi; h++ {
		cur = append(cur, cvert{p: m.Unwrap(m.Verts[m.CellVerts[h]], c.ref), he: int32(h)})
	}
	for k := tlo; k < thi; k++ {
		pl := c.clp.cPlanes[k]
		d := pl.d + pl.m.X*c.shift.X + pl.m.Y*c.shift.Y
		allIn := true
		for i, v := range cur {
			sd := pl.m.X*v.p.X + pl.m.Y*v.p.Y - d
			c.side[i] = sd
			allIn = allIn && sd >= 0
		}
		if allIn {
			continue
		}
		which ^= 1
		next := c.bufs[which][:0]
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
				x := c.cross(u, w, c.side[i], c.side[j], k, pl, d)
				if inU {
					next = append(next, cvert{p: x, clip: true, he: int32(k)})
				} else {
					next = append(next, cvert{p: x, clip: u.clip, he: u.he})
				}
			}
		}
		if len(next) < 3 {
			return 0
		}
		cur = next
	}
	c.poly = cur
	a, _ := planarAreaMoment(cur)
	return a
}

// cross returns where the segment u→w crosses line k (signed distances su, sw of opposite
// signs): from the subject edge's original end points when u starts a subject edge, from
// the clipping cell's vertex when two of its adjacent edges meet.
func (c *planeClipper) cross(u, w cvert, su, sw float64, k int, pl halfPlane, d float64) r3.Vec {
	if u.clip {
		if int(c.clp.cNext[u.he]) == k {
			return r3.Add(c.clp.m.Unwrap(c.clp.m.Verts[c.clp.cTo[u.he]], r3.Sub(u.p, c.shift)), c.shift)
		}
		if int(c.clp.cNext[k]) == int(u.he) {
			return r3.Add(c.clp.m.Unwrap(c.clp.m.Verts[c.clp.cTo[k]], r3.Sub(u.p, c.shift)), c.shift)
		}
	} else {
		m := c.sub.m
		a := m.Unwrap(m.Verts[m.CellVerts[u.he]], c.ref)
		b := m.Unwrap(m.Verts[c.sub.heTo[u.he]], a)
		sa := pl.m.X*a.X + pl.m.Y*a.Y - d
		sb := pl.m.X*b.X + pl.m.Y*b.Y - d
		if (sa < 0) != (sb < 0) {
			return lerpCross(a, b, sa, sb)
		}
	}
	return lerpCross(u.p, w.p, su, sw)
}

// lerpCross returns a + t(b − a) with t = sa/(sa − sb): where the line with signed
// distances sa, sb (opposite signs) crosses the segment.
func lerpCross(a, b r3.Vec, sa, sb float64) r3.Vec {
	t := sa / (sa - sb)
	return r3.Vec{X: a.X + t*(b.X-a.X), Y: a.Y + t*(b.Y-a.Y)}
}

// planarAreaMoment returns the shoelace area and the first moment ∫(x, y) dA of a polygon,
// computed about its first vertex for accuracy and shifted back.
func planarAreaMoment(poly []cvert) (float64, r3.Vec) {
	o := poly[0].p
	var a2, mx, my float64
	for k := 1; k+1 < len(poly); k++ {
		x1, y1 := poly[k].p.X-o.X, poly[k].p.Y-o.Y
		x2, y2 := poly[k+1].p.X-o.X, poly[k+1].p.Y-o.Y
		cr := x1*y2 - x2*y1
		a2 += cr
		mx += cr * (x1 + x2)
		my += cr * (y1 + y2)
	}
	a := a2 / 2
	return a, r3.Vec{X: mx/6 + a*o.X, Y: my/6 + a*o.Y}
}

// moment returns ∫ (x, y) dA over the last clipped polygon, in the subject cell's frame.
func (c *planeClipper) moment() r3.Vec {
	_, m := planarAreaMoment(c.poly)
	return m
}

// polygon appends the last clipped polygon to dst: straight edges, subject-frame points.
func (c *planeClipper) polygon(dst []PolyVertex) []PolyVertex {
	for _, v := range c.poly {
		dst = append(dst, PolyVertex{P: v.p})
	}
	return dst
}
