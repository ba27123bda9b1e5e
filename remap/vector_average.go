package remap

import (
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// AveragedEdgeNormal returns the plain-averaging prolongation of column wind increments
// to edge-normal components on the dynamics mesh dyn, kept to compare with the default,
// Adjoint(east) and Adjoint(north) of ColumnWinds:
//
//	u_e = ½ (v_{c0} + v_{c1}) · n_e
//
// where c0, c1 are the two cells of edge e (a boundary edge takes its one cell's vector)
// and v_c is the 3-D vector e_c E(x_c) + n_c N(x_c) built from the east and north
// components at the column points (x and y on the plane). When cols is a different mesh
// the Cartesian components of v are first carried from the columns to the cells of dyn by
// Build(cols, dyn, opt) (an opt with no Method means conservative order 1); when cols is
// nil or the same mesh as dyn they are used as they are.
//
// The increment is fromEast·δe + fromNorth·δn. Unlike the adjoint it does not conserve
// energy exchange, but it is consistent: a uniform wind on the plane gives u·n_e exactly.
// On an orthogonal mesh whose edge midpoints bisect the centre-to-centre segments
// (uniform planar quadrilaterals, for example) it coincides with the adjoint of the
// Perot reconstruction (tested): there (W*)_{e,c} = s_{c,e}(x_e − x_c)/d_e = n_e/2.
// Method EdgeAverage, Order 1; the target side carries EdgeMeasure.
func AveragedEdgeNormal(dyn, cols *grids.Mesh, opt Options) (fromEast, fromNorth *weights.Map, err error) {
	if cols == nil {
		cols = dyn
	}
	same := sameMesh(dyn, cols)
	onSphere := dyn.Surface == grids.Sphere
	ncomp := 2
	if onSphere {
		ncomp = 3
	}
	// Basis vectors at the column points, as column scalings of the cell→cell map.
	nc := cols.NumCells()
	var basis [2][3][]float64 // [east|north][component][column]
	for s := range 2 {
		for k := range 3 {
			basis[s][k] = make([]float64, nc)
		}
	}
	for c := 0; c < nc; c++ {
		if !onSphere {
			basis[0][0][c], basis[1][1][c] = 1, 1
			continue
		}
		e, n := eastNorth(cols.CellCentroid[c])
		basis[0][0][c], basis[0][1][c], basis[0][2][c] = e.X, e.Y, e.Z
		basis[1][0][c], basis[1][1][c], basis[1][2][c] = n.X, n.Y, n.Z
	}
	var b *weights.Map
	covSrc := []float64(nil)
	if !same {
		if b, err = Build(cols, dyn, defaultCellMap(opt)); err != nil {
			return nil, nil, err
		}
		covSrc = b.Source.Coverage
	} else {
		b = identityMap(dyn)
	}
	// Edge averaging of component k: A_k[e, c] = ½ n_e,k for the cells of e.
	ne := dyn.NumEdges()
	avg := make([]*weights.CSR, ncomp)
	for k := range ncomp {
		rowCols := make([][]int32, ne)
		rowVals := make([][]float64, ne)
		for e := 0; e < ne; e++ {
			n := dyn.EdgeNormal[e]
			nk := [3]float64{n.X, n.Y, n.Z}[k]
			c0, c1 := dyn.EdgeCells[e][0], dyn.EdgeCells[e][1]
			if c1 < 0 {
				rowCols[e], rowVals[e] = []int32{c0}, []float64{nk}
				continue
			}
			var ci []int32
			var vi []float64
			ci, vi = insertSorted(ci, vi, c0, nk/2)
			ci, vi = insertSorted(ci, vi, c1, nk/2)
			rowCols[e], rowVals[e] = ci, vi
		}
		avg[k] = weights.FromRows(ne, dyn.NumCells(), rowCols, rowVals)
	}
	out := [2]*weights.Map{}
	for s := range 2 {
		terms := make([]*weights.CSR, ncomp)
		for k := range ncomp {
			bk := b.W.Clone()
			bk.ScaleRows(nil, basis[s][k])
			terms[k] = weights.Mul(avg[k], bk)
		}
		out[s] = &weights.Map{
			W:      rowCombine(terms, make([][]float64, ncomp)),
			Source: cellSide(cols, covSrc),
			Target: edgeSide(dyn, grids.EdgeNormal),
			Method: EdgeAverage, Order: 1,
			Provenance: opt.Provenance,
			Attrs:      map[string]string{"component": []string{CompEast, CompNorth}[s]},
		}
		if err := out[s].Check(); err != nil {
			return nil, nil, err
		}
	}
	return out[0], out[1], nil
}

// identityMap returns the identity on the cells of m.
func identityMap(m *grids.Mesh) *weights.Map {
	n := m.NumCells()
	cols := make([][]int32, n)
	vals := make([][]float64, n)
	for i := range cols {
		cols[i], vals[i] = []int32{int32(i)}, []float64{1}
	}
	return &weights.Map{W: weights.FromRows(n, n, cols, vals), Source: cellSide(m, nil), Target: cellSide(m, nil)}
}
