package remap

import (
	"fmt"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// ScalarToColumns returns the restriction of a scalar field at horizontal location from
// on the dynamics mesh dyn to the cells (footprints) of cols:
//
//   - grids.Cell: Build(dyn, cols, opt);
//   - grids.Vertex: CellFromVertices(dyn), then Build(dyn, cols, opt) unless cols is dyn
//     (Compose);
//   - grids.DG1, grids.CG2: BuildFESpace(dyn, from, cols, opt), exact quadrature of the
//     basis, also when cols is dyn.
//
// An opt with no Method means conservative order 1. A nil cols means dyn. Vector
// locations (edge-normal, edge-tangential) go through ColumnWinds.
func ScalarToColumns(dyn, cols *grids.Mesh, from grids.HLocation, opt Options) (*weights.Map, error) {
	if cols == nil {
		cols = dyn
	}
	opt = defaultCellMap(opt)
	switch from {
	case grids.Cell:
		return Build(dyn, cols, opt)
	case grids.Vertex:
		vc, err := CellFromVertices(dyn)
		if err != nil || sameMesh(dyn, cols) {
			return vc, err
		}
		b, err := Build(dyn, cols, opt)
		if err != nil {
			return nil, err
		}
		return Compose(b, vc)
	case grids.DG1, grids.CG2:
		return BuildFESpace(dyn, from, cols, opt)
	case grids.EdgeNormal, grids.EdgeTangential:
		return nil, fmt.Errorf("%w: %v holds vector components; use ColumnWinds", ErrBadOptions, from)
	}
	return nil, fmt.Errorf("%w: unknown location %v", ErrBadOptions, from)
}
