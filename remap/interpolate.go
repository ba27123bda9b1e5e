package remap

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// dualSlack is how far outside a dual polygon, as a share of its size, a point may lie
// and still be interpolated from it (with coordinates clamped onto the polygon where the
// scheme allows): rounding at shared sides is ~1e-16, so this only closes
// rounding-level cracks between polygons, never a real gap of a regional mesh.
const dualSlack = 1e-9

// gapSlack: inside a cell whose vertices all have dual polygons, a point that no polygon
// contains lies in a gap between polygons of different kinds (a lon–lat rectangle, whose
// sides are parallels, next to a great-arc polygon, in a mesh that mixes lat–lon cells
// with others); it takes the nearest polygon if it is within this share of that polygon's
// size. The great arc through two points of a parallel Δλ apart strays from it by at
// most sinφ·cosφ·Δλ²/8 ≤ Δλ²/16 radians of latitude (from tanφ = tanφ_max·cos λ), a
// share Δλ/16 of a square cell: well below this for any usable grid.
const gapSlack = 0.25

// buildInterpolate builds the first-order interpolation map: the value at each target
// column point (the target cell centroid) is interpolated from the source cell means,
// which are taken as values at the source centroids.
//
// The interpolant lives on the centroid dual of the source mesh (centroidDual): the point
// is found by walking across source cells to the cell that contains it (from the cell
// whose centroid is nearest, so the result depends on the point only), then among the
// dual polygons of that cell's vertices (and, failing that, of its vertex neighbours').
// Inside a dual polygon the weights are
//
//   - barycentric coordinates on triangles and mean value coordinates (Floater 2003) on
//     other polygons, evaluated in the gnomonic projection about the point on the
//     sphere, where the polygon's great-arc sides are straight lines;
//   - bilinear in longitude and latitude on the lon–lat rectangles of latitude–longitude
//     meshes (longitudes measured from a corner's meridian, never absolute), and the
//     matching scheme of polarWeights in the cap around each pole.
//
// Guarantees (tested): row sums are 1 to rounding on covered targets; on the plane a
// linear function is reproduced to rounding at every covered point, and the weights are
// non-negative when the dual polygons are convex; on the sphere a linear function of
// position is reproduced up to the curvature error O(h²) (h the cell size in radians:
// the cell means of a·x are a·x̄ with |x̄| = 1 − O(h²), and the gnomonic projection
// distorts by O(h²)).
//
// Targets outside every dual polygon (beyond the outer ring of centroids of a regional
// source) are uncovered: empty rows, coverage 0. A point inside a cell whose vertices all
// have dual polygons is not dropped for a narrow gap between polygons of different kinds
// (see gapSlack). Masks and normalisation: buildPointMap.
func buildInterpolate(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	if src.Surface != tgt.Surface {
		return buildPointMap(src, tgt, opt, Interpolate, 1, nil)
	}
	return buildPointMap(src, tgt, opt, Interpolate, 1, interpolationStencils(src))
}

// interpolationStencils prepares the centroid dual, the walk and the index of src and
// returns a maker of per-worker stencils.
func interpolationStencils(src *grids.Mesh) func() stencilFunc {
	dual := newCentroidDual(src)
	geom := newMeshGeom(src)
	all := make([]int32, src.NumCells())
	for i := range all {
		all[i] = int32(i)
	}
	index := newPointIndex(src, src.CellCentroid, all)
	var bound *regionBound
	if hasBoundary(src) {
		bound = newRegionBound(geom)
	}
	return func() stencilFunc {
		it := &interpolator{dual: dual, geom: geom, index: index, bound: bound}
		return it.stencil
	}
}

// interpolator holds one worker's scratch space.
type interpolator struct {
	dual  *centroidDual
	geom  *meshGeom
	index *pointIndex
	bound *regionBound // nil for meshes without boundary
	q     [][2]float64
	tried []int32
	best  struct {
		cols []int32
		w    []float64
	}
}

func (it *interpolator) stencil(p r3.Vec, cols []int32, w []float64) ([]int32, []float64, bool) {
	m := it.dual.m
	if m.Surface == grids.Plane {
		p = m.Wrap(p)
	}
	if it.bound != nil && !it.bound.mayContain(p) {
		return cols, w, false
	}
	start, _, ok := it.index.nearest(p)
	if !ok {
		return cols, w, false
	}
	c := int(start)
	located := false
	if found, ok := it.geom.locate(p, c); ok {
		c, located = found, true
	}
	f := it.dual.frame(p)
	it.tried = it.tried[:0]
	bestOut := math.Inf(1)
	// try evaluates the dual of vertex v; it reports true when p is inside.
	try := func(v int32) bool {
		if it.dual.kind[v] == dualNone {
			return false
		}
		for _, u := range it.tried {
			if u == v {
				return false
			}
		}
		it.tried = append(it.tried, v)
		n := len(cols)
		var out float64
		var ok bool
		cols, w, it.q, out, ok = it.dual.weigh(&f, int(v), cols, w, it.q)
		if !ok || out > 0 {
			if ok && out < bestOut {
				bestOut = out
				it.best.cols = append(it.best.cols[:0], cols[n:]...)
				it.best.w = append(it.best.w[:0], w[n:]...)
			}
			cols, w = cols[:n], w[:n]
			return false
		}
		return true
	}
	for _, v := range m.CellVertices(c) {
		if try(v) {
			return cols, w, true
		}
	}
	for _, k := range vertexNeighbours(m, c, nil) {
		for _, v := range m.CellVertices(int(k)) {
			if try(v) {
				return cols, w, true
			}
		}
	}
	if bestOut <= dualSlack || (bestOut <= gapSlack && located && it.interiorCell(c)) {
		return append(cols, it.best.cols...), append(w, it.best.w...), true
	}
	return cols, w, false
}

// interiorCell reports whether every vertex of cell c has a dual polygon: then the point
// lies among those polygons (up to gaps, see gapSlack), not beyond the outer ring of
// centroids of a regional mesh.
func (it *interpolator) interiorCell(c int) bool {
	for _, v := range it.dual.m.CellVertices(c) {
		if it.dual.kind[v] == dualNone {
			return false
		}
	}
	return true
}
