package remap

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// regionBound is a cheap outer bound of a regional mesh: a spherical cap, or a box along
// the plane's bounded directions, that contains every cell (each cell's own bounding cap
// or box from meshGeom, so curved parallel edges are inside too). Points outside it are
// outside the mesh; points inside may or may not be. It lets point methods skip the
// search for targets far from a small regional source.
type regionBound struct {
	sphere bool
	all    bool // no useful bound: every point may be inside
	centre r3.Vec
	cosR   float64
	lo, hi r3.Vec // plane; ±Inf along periodic directions
}

// boundSlack widens the bound by rounding-level amounts (radians, or a share of the box).
const boundSlack = 1e-9

func newRegionBound(g *meshGeom) *regionBound {
	m := g.m
	b := &regionBound{sphere: g.sphere}
	nc := m.NumCells()
	if g.sphere {
		var sum r3.Vec
		for _, c := range g.capC {
			sum = r3.Add(sum, c)
		}
		n := math.Sqrt(r3.Norm2(sum))
		if !(n > 1e-6*float64(nc)) {
			b.all = true
			return b
		}
		b.centre = r3.Scale(1/n, sum)
		r := 0.0
		for c := 0; c < nc; c++ {
			ang := math.Acos(math.Max(-1, math.Min(1, r3.Dot(b.centre, g.capC[c]))))
			r = math.Max(r, ang+math.Atan2(g.capSin[c], g.capCos[c]))
		}
		r += boundSlack
		if r >= math.Pi {
			b.all = true
			return b
		}
		b.cosR = math.Cos(r)
		return b
	}
	inf := math.Inf(1)
	b.lo, b.hi = r3.Vec{X: inf, Y: inf}, r3.Vec{X: -inf, Y: -inf}
	for c := 0; c < nc; c++ {
		ce, h := g.boxC[c], g.boxH[c]
		b.lo = r3.Vec{X: math.Min(b.lo.X, ce.X-h.X), Y: math.Min(b.lo.Y, ce.Y-h.Y)}
		b.hi = r3.Vec{X: math.Max(b.hi.X, ce.X+h.X), Y: math.Max(b.hi.Y, ce.Y+h.Y)}
	}
	sx, sy := boundSlack*(b.hi.X-b.lo.X), boundSlack*(b.hi.Y-b.lo.Y)
	b.lo.X, b.hi.X = b.lo.X-sx, b.hi.X+sx
	b.lo.Y, b.hi.Y = b.lo.Y-sy, b.hi.Y+sy
	if m.PeriodicX {
		b.lo.X, b.hi.X = -inf, inf
	}
	if m.PeriodicY {
		b.lo.Y, b.hi.Y = -inf, inf
	}
	return b
}

// mayContain reports false only for points certainly outside the mesh.
func (b *regionBound) mayContain(p r3.Vec) bool {
	if b.all {
		return true
	}
	if b.sphere {
		return r3.Dot(b.centre, p) >= b.cosR
	}
	return p.X >= b.lo.X && p.X <= b.hi.X && p.Y >= b.lo.Y && p.Y <= b.hi.Y
}
