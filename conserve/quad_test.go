package conserve

import (
	"math"
	"testing"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
)

// TestQuadratureFor: the order chosen from the cell size gives cell means of the
// oscillatory test field that agree with 16-point Gauss–Legendre to 1e-12 relative to the
// field's range (the bound QuadratureFor aims at, with a margin for the estimate being
// a leading term only), on coarse and fine meshes.
func TestQuadratureFor(t *testing.T) {
	for _, n := range []int{24, 96} { // on coarser cells the cap of 8 points leaves ~1e-11
		m, err := grids.NewCubedSphere(n, 0)
		if err != nil {
			t.Fatal(err)
		}
		q := QuadratureFor(m)
		got := make([]float64, m.NumCells())
		ref := make([]float64, m.NumCells())
		if err := CellMeansTo(got, m, analytic.Oscillatory, q); err != nil {
			t.Fatal(err)
		}
		if err := CellMeansTo(ref, m, analytic.Oscillatory, 16); err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i := range got {
			worst = math.Max(worst, math.Abs(got[i]-ref[i]))
		}
		t.Logf("N=%d: order %d, worst difference %.2g", n, q, worst)
		if worst > 1e-12 {
			t.Errorf("N=%d: order %d leaves %.2g", n, q, worst)
		}
	}
}
