package conserve

import (
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// planeQuads returns a doubly periodic n×n quad mesh of the unit square.
func planeQuads(t testing.TB, n int) *grids.Mesh {
	t.Helper()
	m, err := grids.NewPlane(grids.PlaneSpec{NX: n, NY: n, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// coarsen2 returns the hand-built 2:1 conservative coarsening from the 2n×2n quad mesh
// to the n×n one (both periodic on the unit square): each coarse cell is the mean of its
// 2×2 fine cells, weights 1/4 = fine area / coarse area (overlap area over target area,
// the first-order conservative weight of Jones 1999).
func coarsen2(n int) *weights.CSR {
	var ts []weights.Triplet
	for j := 0; j < 2*n; j++ {
		for i := 0; i < 2*n; i++ {
			ts = append(ts, weights.Triplet{Row: int32((j/2)*n + i/2), Col: int32(j*2*n + i), Value: 0.25})
		}
	}
	return weights.FromTriplets(n*n, 4*n*n, ts)
}

// cellMap wraps a matrix between two cell meshes as a Map with the meshes' areas as
// measures.
func cellMap(w *weights.CSR, src, tgt *grids.Mesh) *weights.Map {
	return &weights.Map{
		W:      w,
		Source: weights.Side{MeshName: src.Name, Location: grids.Location{H: grids.Cell}, Size: src.NumCells(), Measure: src.CellArea},
		Target: weights.Side{MeshName: tgt.Name, Location: grids.Location{H: grids.Cell}, Size: tgt.NumCells(), Measure: tgt.CellArea},
		Method: "conservative", Order: 1,
	}
}

// twoPointAverage returns the map from a periodic line of n cells to the line shifted by
// half a cell: target t is the mean of cells t and t+1.
func twoPointAverage(n int) *weights.CSR {
	var ts []weights.Triplet
	for t := 0; t < n; t++ {
		ts = append(ts, weights.Triplet{Row: int32(t), Col: int32(t), Value: 0.5},
			weights.Triplet{Row: int32(t), Col: int32((t + 1) % n), Value: 0.5})
	}
	return weights.FromTriplets(n, n, ts)
}

// cubeCoarsen2 returns the exact conservative 2:1 coarsening from the cubed sphere with
// 2n cells per panel edge to the one with n: the equiangular grid lines of n are every
// second line of 2n, so each coarse cell is the union of 4 fine cells and the weights are
// fine area / coarse area (Jones 1999 first-order weights with exact overlaps).
func cubeCoarsen2(fine, coarse *grids.Mesh, n int) *weights.CSR {
	var ts []weights.Triplet
	m := 2 * n
	for p := 0; p < 6; p++ {
		for j := 0; j < m; j++ {
			for i := 0; i < m; i++ {
				f := (p*m+j)*m + i
				c := (p*n+j/2)*n + i/2
				ts = append(ts, weights.Triplet{Row: int32(c), Col: int32(f), Value: fine.CellArea[f] / coarse.CellArea[c]})
			}
		}
	}
	return weights.FromTriplets(coarse.NumCells(), fine.NumCells(), ts)
}

func cubed(t testing.TB, n int) *grids.Mesh {
	t.Helper()
	m, err := grids.NewCubedSphere(n, 0)
	if err != nil {
		t.Fatal(err)
	}
	return m
}
