package remap

import (
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// buildNearest builds the nearest-neighbour map (order 0; Order 1 is accepted as a
// synonym): each target column point (the target cell centroid) takes the value of the
// unmasked source cell whose centroid is nearest, by chord length on the sphere (the same
// order as great-circle distance) and by minimum-image distance on a periodic plane.
// Ties within pointTieShare (1e-12) of the domain size go to the lowest cell index, so
// the map depends on the meshes only. Each covered row holds a single weight 1.
//
// A target point outside a regional source mesh (no source cell contains it) is
// uncovered: empty row, coverage 0. Inside the mesh, masked source cells are skipped, so
// a target over a masked cell takes the nearest unmasked one (filling, e.g., coastal
// points); with every source masked all targets are uncovered.
func buildNearest(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	if src.Surface != tgt.Surface {
		return buildPointMap(src, tgt, opt, Nearest, 0, nil)
	}
	var pts []r3.Vec
	var ids []int32
	for s := 0; s < src.NumCells(); s++ {
		if opt.SourceMask == nil || opt.SourceMask[s] {
			pts = append(pts, src.CellCentroid[s])
			ids = append(ids, int32(s))
		}
	}
	index := newPointIndex(src, pts, ids)
	// Inside test for regional meshes: walk from the cell with the nearest centroid.
	var geom *meshGeom
	var all *pointIndex
	var bound *regionBound
	if hasBoundary(src) {
		geom = newMeshGeom(src)
		bound = newRegionBound(geom)
		every := make([]int32, src.NumCells())
		for i := range every {
			every[i] = int32(i)
		}
		all = newPointIndex(src, src.CellCentroid, every)
	}
	return buildPointMap(src, tgt, opt, Nearest, 0, func() stencilFunc {
		return func(p r3.Vec, cols []int32, w []float64) ([]int32, []float64, bool) {
			if src.Surface == grids.Plane {
				p = src.Wrap(p)
			}
			if geom != nil {
				if !bound.mayContain(p) {
					return cols, w, false
				}
				start, _, _ := all.nearest(p)
				if _, in := geom.locate(p, int(start)); !in {
					return cols, w, false
				}
			}
			s, _, ok := index.nearest(p)
			if !ok {
				return cols, w, false
			}
			return append(cols, s), append(w, 1), true
		}
	})
}

// hasBoundary reports whether some edge of m has a cell on one side only (a regional
// mesh, or a plane that is not periodic in both directions).
func hasBoundary(m *grids.Mesh) bool {
	for _, ec := range m.EdgeCells {
		if ec[1] < 0 {
			return true
		}
	}
	return false
}
