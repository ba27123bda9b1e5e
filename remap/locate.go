package remap

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/spatial/kdtree"
	"gonum.org/v1/gonum/spatial/r3"
)

// locate walks from cell start towards the cell containing point p, each step crossing the
// edge whose half-plane p violates most. It reports false when the walk leaves the mesh
// (p outside a regional mesh) or takes more than 4√N + 64 steps (a non-convex mesh can
// make it cycle).
func (g *meshGeom) locate(p r3.Vec, start int) (int, bool) {
	m := g.m
	limit := 4*int(math.Sqrt(float64(m.NumCells()))) + 64
	t := start
	for step := 0; step < limit; step++ {
		lo, hi := int(m.CellStart[t]), int(m.CellStart[t+1])
		q := p
		if !g.sphere {
			q = m.Unwrap(p, m.Verts[m.CellVerts[lo]])
		}
		worst, wh := 0.0, -1
		for h := lo; h < hi; h++ {
			if s := g.planes[h].eval(q); s < worst {
				worst, wh = s, h
			}
		}
		if wh < 0 {
			return t, true
		}
		ec := m.EdgeCells[m.CellEdges[wh]]
		nb := ec[0]
		if nb == int32(t) {
			nb = ec[1]
		}
		if nb < 0 {
			return -1, false
		}
		t = int(nb)
	}
	return -1, false
}

// nearbyTargets returns the target cells whose bounding regions meet the source cell's,
// from a k-d tree over target centres built on first use (regional meshes and walks that
// fail). The radius is the source's plus the largest target's, so no candidate is missed.
func (e *overlapEngine) nearbyTargets(s int) []int {
	e.idxOnce.Do(e.buildIndex)
	var q kdPoint
	var r float64
	if e.sg.sphere {
		c := e.sg.capC[s]
		q = kdPoint{x: [3]float64{c.X, c.Y, c.Z}}
		ang := math.Atan2(e.sg.capSin[s], e.sg.capCos[s]) + e.idxRange
		r = 2 * math.Sin(math.Min(ang, math.Pi)/2) // chord length
	} else {
		c := e.sg.boxC[s]
		q = kdPoint{x: [3]float64{c.X, c.Y, 0}}
		r = math.Hypot(e.sg.boxH[s].X, e.sg.boxH[s].Y) + e.idxRange
	}
	keep := kdtree.NewDistKeeper(r * r * (1 + 1e-9))
	e.idx.NearestSet(keep, q)
	var out []int
	for _, c := range keep.Heap {
		if c.Comparable == nil {
			continue
		}
		out = append(out, int(c.Comparable.(kdPoint).i))
	}
	sort.Ints(out)
	return out
}

func (e *overlapEngine) buildIndex() {
	tg := e.tg
	nt := tg.m.NumCells()
	pts := make(kdPoints, nt)
	for t := 0; t < nt; t++ {
		if tg.sphere {
			c := tg.capC[t]
			pts[t] = kdPoint{x: [3]float64{c.X, c.Y, c.Z}, i: int32(t)}
		} else {
			c := tg.boxC[t]
			pts[t] = kdPoint{x: [3]float64{c.X, c.Y, 0}, i: int32(t)}
			e.idxRange = math.Max(e.idxRange, math.Hypot(tg.boxH[t].X, tg.boxH[t].Y))
		}
	}
	if tg.sphere {
		e.idxRange = tg.maxCapRadius
	}
	e.idx = kdtree.New(pts, false)
}

// kdPoint is a target centre carrying its cell index (kdtree.New reorders its input).
type kdPoint struct {
	x [3]float64
	i int32
}

func (p kdPoint) Compare(c kdtree.Comparable, d kdtree.Dim) float64 {
	return p.x[d] - c.(kdPoint).x[d]
}
func (p kdPoint) Dims() int { return 3 }
func (p kdPoint) Distance(c kdtree.Comparable) float64 {
	q := c.(kdPoint)
	dx, dy, dz := p.x[0]-q.x[0], p.x[1]-q.x[1], p.x[2]-q.x[2]
	return dx*dx + dy*dy + dz*dz
}

type kdPoints []kdPoint

func (p kdPoints) Index(i int) kdtree.Comparable { return p[i] }
func (p kdPoints) Len() int                      { return len(p) }
func (p kdPoints) Pivot(d kdtree.Dim) int        { return kdPlane{kdPoints: p, Dim: d}.Pivot() }
func (p kdPoints) Slice(start, end int) kdtree.Interface {
	return p[start:end]
}

type kdPlane struct {
	kdtree.Dim
	kdPoints
}

func (p kdPlane) Less(i, j int) bool { return p.kdPoints[i].x[p.Dim] < p.kdPoints[j].x[p.Dim] }
func (p kdPlane) Pivot() int         { return kdtree.Partition(p, kdtree.MedianOfMedians(p)) }
func (p kdPlane) Slice(start, end int) kdtree.SortSlicer {
	p.kdPoints = p.kdPoints[start:end]
	return p
}
func (p kdPlane) Swap(i, j int) {
	p.kdPoints[i], p.kdPoints[j] = p.kdPoints[j], p.kdPoints[i]
}
