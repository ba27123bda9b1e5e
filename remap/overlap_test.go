package remap

import (
	"fmt"
	"github.com/colbridge/colbridge/weights"
	"math"
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// coverTol: for meshes covering the same surface the pieces of every cell sum to its area
// to 1e-12 relative (the bound for consistent predicates; observed ~1e-15).
const coverTol = 1e-12

func mustMesh(t testing.TB, m *grids.Mesh, err error) *grids.Mesh {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// testMeshes returns the sphere set: cubed N=24, icosahedral dual level 4,
// lat–lon 2°, lat–lon 1.5° shifted by a fraction of a cell.
func testMeshes(t testing.TB) map[string]*grids.Mesh {
	c24, err := grids.NewCubedSphere(24, 0)
	mustMesh(t, c24, err)
	i4, err := grids.NewIcosahedralDual(4, 0)
	mustMesh(t, i4, err)
	ll2, err := grids.NewLatLon(grids.LatLonSpec{NLon: 180, NLat: 90})
	mustMesh(t, ll2, err)
	ll15, err := grids.NewLatLon(grids.LatLonSpec{NLon: 240, NLat: 120, Lon0: 0.37})
	mustMesh(t, ll15, err)
	return map[string]*grids.Mesh{"cubed24": c24, "icosdual4": i4, "latlon2": ll2, "latlon1.5shift": ll15}
}

// coverageDefects returns the worst |Σ pieces − area|/area over source and target cells.
func coverageDefects(o *Overlaps) (src, tgt float64, worstS, worstT int) {
	s2 := o.Source.Scale() * o.Source.Scale()
	t2 := o.Target.Scale() * o.Target.Scale()
	tsum := make([]weights.Accumulator, o.Target.NumCells())
	for s := 0; s < o.Source.NumCells(); s++ {
		var k weights.Accumulator
		for p := o.SrcStart[s]; p < o.SrcStart[s+1]; p++ {
			k.Add(o.Area[p])
			tsum[o.Tgt[p]].Add(o.Area[p])
		}
		if d := math.Abs(k.Sum()*s2-o.Source.CellArea[s]) / o.Source.CellArea[s]; d > src {
			src, worstS = d, s
		}
	}
	for t := range tsum {
		if d := math.Abs(tsum[t].Sum()*t2-o.Target.CellArea[t]) / o.Target.CellArea[t]; d > tgt {
			tgt, worstT = d, t
		}
	}
	return
}

func TestOverlapCoverage(t *testing.T) {
	ms := testMeshes(t)
	names := []string{"cubed24", "icosdual4", "latlon2", "latlon1.5shift"}
	for _, a := range names {
		for _, b := range names {
			t.Run(fmt.Sprintf("%s-%s", a, b), func(t *testing.T) {
				o, err := ComputeOverlaps(ms[a], ms[b], OverlapOptions{})
				if err != nil {
					t.Fatal(err)
				}
				ds, dt, ws, wt := coverageDefects(o)
				if ds > coverTol || dt > coverTol {
					t.Errorf("%d pieces; worst source defect %.3g (cell %d), target %.3g (cell %d)", o.Len(), ds, ws, dt, wt)
				}
				t.Logf("%d pieces; defects %.2g %.2g", o.Len(), ds, dt)
			})
		}
	}
}
