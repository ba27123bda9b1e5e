package remap

import (
	"math"

	"gonum.org/v1/gonum/spatial/kdtree"
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
)

// pointIndex finds the nearest of a set of points on a mesh's surface: by chord length on
// the sphere (the same order as great-circle distance), by the minimum-image distance on
// a periodic plane, by plain distance on a bounded plane.
//
// Periodic planes: the points are kept once, wrapped into [0, Lx) × [0, Ly). A query q
// (wrapped the same way) is also asked as each of its images q + (i·Lx, j·Ly),
// i, j ∈ {−1, 0, 1}, whose distance to the domain rectangle is below the best distance
// found so far; every point of the domain then has its minimum image among the answers,
// so the result is exact with no guessed margin and no replicated points.
//
// Ties: among points whose distance is within tieTol of the smallest, the lowest id wins,
// so the answer depends only on the query, never on the tree's internal order.
type pointIndex struct {
	m      *grids.Mesh
	tree   *kdtree.Tree
	tieTol float64 // absolute distance treated as a tie
	empty  bool
}

// pointTieShare is the tie tolerance as a share of the domain size (1 on the unit sphere,
// the larger period or extent on the plane): far above the rounding of centroids (≈1e-16
// of the domain), far below any real spacing between cell centres.
const pointTieShare = 1e-12

// newPointIndex indexes the points pts[i] carrying the ids ids[i] (len(ids) = len(pts)).
func newPointIndex(m *grids.Mesh, pts []r3.Vec, ids []int32) *pointIndex {
	if len(pts) != len(ids) {
		panic("remap: newPointIndex: lengths differ")
	}
	ix := &pointIndex{m: m, empty: len(pts) == 0}
	scale := 1.0
	if m.Surface == grids.Plane {
		scale = 0
		for _, p := range pts {
			scale = math.Max(scale, math.Max(math.Abs(p.X), math.Abs(p.Y)))
		}
		scale = math.Max(scale, math.Max(m.Lx, m.Ly))
	}
	ix.tieTol = pointTieShare * scale
	if ix.empty {
		return ix
	}
	kp := make(kdPoints, len(pts))
	for i, p := range pts {
		p = m.Wrap(p)
		kp[i] = kdPoint{x: [3]float64{p.X, p.Y, p.Z}, i: ids[i]}
	}
	ix.tree = kdtree.New(kp, false)
	return ix
}

// nearest returns the id of the point nearest to p and that distance. ok is false when the
// index is empty.
//
// One two-nearest search per relevant image settles almost every query: when the second
// nearest is farther than the nearest plus tieTol there is no tie. Otherwise every point
// within that radius is gathered and the lowest id wins.
func (ix *pointIndex) nearest(p r3.Vec) (id int32, dist float64, ok bool) {
	if ix.empty {
		return -1, 0, false
	}
	q := ix.m.Wrap(p)
	imgs := ix.images(q)
	best, second := math.Inf(1), math.Inf(1)
	id = -1
	radius2 := func() float64 { r := math.Sqrt(best) + ix.tieTol; return r * r }
	for _, im := range imgs {
		if ix.boxDist2(im) > radius2() {
			continue
		}
		keep := kdtree.NewNKeeper(2)
		ix.tree.NearestSet(keep, kdPoint{x: [3]float64{im.X, im.Y, im.Z}})
		for _, c := range keep.Heap {
			if c.Comparable == nil {
				continue
			}
			switch d := c.Dist; {
			case d < best:
				best, second, id = d, best, c.Comparable.(kdPoint).i
			case d < second:
				second = d
			}
		}
	}
	r2 := radius2()
	if second <= r2 {
		id = -1
		for _, im := range imgs {
			if ix.boxDist2(im) > r2 {
				continue
			}
			keep := kdtree.NewDistKeeper(r2)
			ix.tree.NearestSet(keep, kdPoint{x: [3]float64{im.X, im.Y, im.Z}})
			for _, c := range keep.Heap {
				if c.Comparable == nil {
					continue
				}
				if k := c.Comparable.(kdPoint).i; id < 0 || k < id {
					id = k
				}
			}
		}
	}
	return id, math.Sqrt(best), id >= 0
}

// images returns q and, on a periodic plane, its shifted copies.
func (ix *pointIndex) images(q r3.Vec) []r3.Vec {
	m := ix.m
	if m.Surface != grids.Plane || !(m.PeriodicX || m.PeriodicY) {
		return []r3.Vec{q}
	}
	out := make([]r3.Vec, 0, 9)
	out = append(out, q)
	for i := -1; i <= 1; i++ {
		if i != 0 && !m.PeriodicX {
			continue
		}
		for j := -1; j <= 1; j++ {
			if (j != 0 && !m.PeriodicY) || (i == 0 && j == 0) {
				continue
			}
			out = append(out, r3.Vec{X: q.X + float64(i)*m.Lx, Y: q.Y + float64(j)*m.Ly})
		}
	}
	return out
}

// boxDist2 returns the squared distance from an image of a query to the rectangle that
// holds every point along the periodic directions (zero off periodic planes).
func (ix *pointIndex) boxDist2(q r3.Vec) float64 {
	m := ix.m
	if m.Surface != grids.Plane {
		return 0
	}
	var dx, dy float64
	if m.PeriodicX {
		dx = math.Max(0, math.Max(-q.X, q.X-m.Lx))
	}
	if m.PeriodicY {
		dy = math.Max(0, math.Max(-q.Y, q.Y-m.Ly))
	}
	return dx*dx + dy*dy
}
