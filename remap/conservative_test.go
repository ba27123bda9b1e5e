package remap

import (
	"fmt"
	"math"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// propTol: conservation max|c_s − 1| and consistency max|Σ_s W_ts − 1| for orders 1 and 2
// (the bound; DESIGN.md §7).
const propTol = 1e-13

// defects returns max|c_s − 1| over fully covered sources and max|row sum − 1| over covered
// targets, as defined in DESIGN.md §5.
func defects(m *weights.Map) (cons, consist float64) {
	cs := make([]float64, m.W.Cols)
	m.W.ColSumsTo(cs, m.Target.Measure)
	for s, c := range cs {
		if m.Source.Coverage != nil && m.Source.Coverage[s] < coveredShare {
			continue
		}
		cons = math.Max(cons, math.Abs(c/m.Source.Measure[s]-1))
	}
	rs := make([]float64, m.W.Rows)
	m.W.RowSumsTo(rs)
	for t, r := range rs {
		if m.Target.Coverage != nil && m.Target.Coverage[t] == 0 {
			continue
		}
		consist = math.Max(consist, math.Abs(r-1))
	}
	return
}

// TestConservativeProperties: conservation and consistency ≤ 1e-13 for orders 1 and 2 on
// every ordered pair of the meshes (DESIGN.md §5 definitions; Jones 1999 and
// Ullrich & Taylor 2015 state these properties of conservative maps).
func TestConservativeProperties(t *testing.T) {
	ms := testMeshes(t)
	names := []string{"cubed24", "icosdual4", "latlon2", "latlon1.5shift"}
	for _, order := range []int{1, 2} {
		for _, a := range names {
			for _, b := range names {
				t.Run(fmt.Sprintf("o%d/%s-%s", order, a, b), func(t *testing.T) {
					m, err := Build(ms[a], ms[b], Options{Method: Conservative, Order: order})
					if err != nil {
						t.Fatal(err)
					}
					c, k := defects(m)
					if c > propTol || k > propTol {
						t.Errorf("conservation defect %.3g, consistency defect %.3g", c, k)
					}
				})
			}
		}
	}
}

// TestIdentity: a mesh mapped to itself gives the identity (every overlap of a cell with
// itself is the cell; neighbours only touch) — common practice, exact geometry.
func TestIdentity(t *testing.T) {
	ms := testMeshes(t)
	plane, err := grids.NewPlane(grids.PlaneSpec{NX: 12, NY: 9, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true, Triangles: true})
	mustMesh(t, plane, err)
	ms["plane"] = plane
	for name, m := range ms {
		for _, order := range []int{1, 2} {
			w, err := Build(m, m, Options{Method: Conservative, Order: order})
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i := 0; i < w.W.Rows; i++ {
				for k := w.W.RowStart[i]; k < w.W.RowStart[i+1]; k++ {
					want := 0.0
					if int(w.W.ColIndex[k]) == i {
						want = 1
					}
					worst = math.Max(worst, math.Abs(w.W.Values[k]-want))
				}
			}
			if worst > propTol {
				t.Errorf("%s order %d: identity defect %.3g", name, order, worst)
			}
		}
	}
}
