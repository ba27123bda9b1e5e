package conserve

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
)

// TestNormsByHand: three cells with measures (1, 2, 1), h = (1.1, 2, 2.9) against
// h_T = (1, 2, 3). With the definitions of Williamson et al. (1992, JCP 102:211–224,
// section 3) by hand: l1 = (0.1 + 0 + 0.1)/(1 + 4 + 3) = 0.025,
// l2 = √(0.02/18) = 1/30, l∞ = 0.1/3 = 1/30 (first at index 0).
func TestNormsByHand(t *testing.T) {
	n := Norms([]float64{1.1, 2, 2.9}, []float64{1, 2, 3}, []float64{1, 2, 1}, nil)
	// The inputs 1.1 and 2.9 are not binary fractions: differences carry ≈ 1e-16
	// relative error, so 1e-14 relative is ample.
	const tol = 1e-14
	expect(t, "l1", n.L1, 0.025, tol*0.025)
	expect(t, "l2", n.L2, 1.0/30, tol/30)
	expect(t, "l∞", n.LInf, 1.0/30, tol/30)
	expectInt(t, "l∞ at", n.LInfAt, 0)
	// Masked: only the last cell counts: l1 = 0.1/3, l2 = √(0.01/9) = 1/30.
	m := Norms([]float64{1.1, 2, 2.9}, []float64{1, 2, 3}, []float64{1, 2, 1}, []bool{false, false, true})
	expect(t, "masked l1", m.L1, 0.1/3, tol)
	expectInt(t, "masked l∞ at", m.LInfAt, 2)
}

// tolMeans: the exact cell means by Gauss–Legendre quadrature of order 8 against closed
// forms; the integrands are polynomials of low degree in the quadrature variables (or
// analytic with geometric convergence), so only rounding is left.
const tolMeans = 2e-14

// TestCellMeansClosedForms checks CellMeansTo against closed forms:
//   - latitude–longitude cells, f = z = sin φ: the mean is (sin φ₁ + sin φ₂)/2
//     (∫ sin φ cos φ dφ over [φ₁, φ₂] divided by ∫ cos φ dφ; elementary calculus);
//   - cubed-sphere cells, f = x, y, z: the mean is the first moment over the area,
//     ∫ x dA = ½∮ x × dx (Stokes), computed independently by grids.Mesh.CellMoment;
//   - plane triangles and squares, f = x: the mean is the centroid's x.
func TestCellMeansClosedForms(t *testing.T) {
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 24, NLat: 12, Lon0: 7})
	if err != nil {
		t.Fatal(err)
	}
	got := make([]float64, ll.NumCells())
	if err := CellMeansTo(got, ll, func(p r3.Vec) float64 { return p.Z }, 8); err != nil {
		t.Fatal(err)
	}
	for c := range got {
		j := c / 24
		p1 := -math.Pi/2 + float64(j)*math.Pi/12
		p2 := p1 + math.Pi/12
		want := (math.Sin(p1) + math.Sin(p2)) / 2
		if math.Abs(got[c]-want) > tolMeans {
			t.Fatalf("lat-lon cell %d: mean z %.17g, want %.17g", c, got[c], want)
		}
	}

	cs := cubed(t, 6)
	r2 := cs.Radius * cs.Radius
	for axis, f := range []analytic.Field{
		func(p r3.Vec) float64 { return p.X },
		func(p r3.Vec) float64 { return p.Y },
		func(p r3.Vec) float64 { return p.Z },
	} {
		got := make([]float64, cs.NumCells())
		if err := CellMeansTo(got, cs, f, 8); err != nil {
			t.Fatal(err)
		}
		for c := range got {
			m := cs.CellMoment(c)
			want := []float64{m.X, m.Y, m.Z}[axis] / (cs.CellArea[c] / r2)
			if math.Abs(got[c]-want) > tolMeans {
				t.Fatalf("cube cell %d axis %d: mean %.17g, moment gives %.17g", c, axis, got[c], want)
			}
		}
	}

	for _, tri := range []bool{false, true} {
		pl, err := grids.NewPlane(grids.PlaneSpec{NX: 5, NY: 4, Lx: 3, Ly: 2, Triangles: tri})
		if err != nil {
			t.Fatal(err)
		}
		got := make([]float64, pl.NumCells())
		if err := CellMeansTo(got, pl, func(p r3.Vec) float64 { return p.X }, 4); err != nil {
			t.Fatal(err)
		}
		for c := range got {
			if math.Abs(got[c]-pl.CellCentroid[c].X) > tolMeans {
				t.Fatalf("plane (triangles %v) cell %d: mean x %.17g, centroid %.17g", tri, c, got[c], pl.CellCentroid[c].X)
			}
		}
	}
}

// TestCellMeansQuadratureOrder supports the accuracy claim in CellMeansTo's doc: at
// order 8 the smooth and tc2-height fields on cubed-sphere cells of about 3.75° (N = 24)
// agree with order 16 to 1e-14 relative (geometric convergence of Gauss–Legendre on
// analytic integrands; order 16 is converged to rounding). It samples every 17th cell
// with analytic.PolygonIntegral, the call CellMeansTo makes for such cells.
func TestCellMeansQuadratureOrder(t *testing.T) {
	cs := cubed(t, 24)
	for _, name := range []string{"smooth", "tc2-height"} {
		f, err := analytic.FieldNamed(name)
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		var buf []r3.Vec
		for c := 0; c < cs.NumCells(); c += 17 {
			buf = cs.CellPoints(c, buf[:0])
			a := analytic.PolygonIntegral(buf, f.Eval, 8)
			b := analytic.PolygonIntegral(buf, f.Eval, 16)
			worst = math.Max(worst, math.Abs(a-b)/math.Abs(b))
		}
		if worst > 1e-14 {
			t.Errorf("%s: order 8 differs from order 16 by %.2e relative", name, worst)
		}
	}
}

// TestCellMeansNotLatLon: a cell with Parallel edges that is not a latitude–longitude
// cell is refused with an error naming the cell.
func TestCellMeansNotLatLon(t *testing.T) {
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 8, NLat: 4})
	if err != nil {
		t.Fatal(err)
	}
	// Pretend cell 9 has another area (as if a vertex were off its parallel): it no
	// longer matches the latitude–longitude formula.
	ll.CellArea[9] *= 1.01
	got := make([]float64, ll.NumCells())
	err = CellMeansTo(got, ll, func(r3.Vec) float64 { return 1 }, 4)
	if err == nil || !strings.Contains(err.Error(), "cell 9") {
		t.Fatalf("error %v, want one naming cell 9", err)
	}
}

// TestObservedOrderFirstOrder: the piecewise-constant prolongation (the adjoint of the
// 2:1 coarsening) from n×n onto 2n×2n is first-order accurate: each fine cell gets its
// coarse cell's mean, off by O(h)·∇f (Taylor). REFERENCES.md lists first order for
// first-order conservative maps [M]. The fitted order must be 1 within 0.05. The
// coarsening itself maps exact fine means to exact coarse means (integrals add), so its
// errors are those of the quadrature.
func TestObservedOrderFirstOrder(t *testing.T) {
	f := DefaultFields(grids.Plane, 1, 1)[:1] // plane-smooth
	var up, down []ConvergenceLevel
	for _, n := range []int{8, 16, 32, 64} {
		coarse, fine := planeQuads(t, n), planeQuads(t, 2*n)
		w := coarsen2(n)
		p := Adjoint(w, fine.CellArea, coarse.CellArea)
		a, err := CheckAccuracy(p, coarse, fine, fine.CellArea, nil, f, 8, 0)
		if err != nil {
			t.Fatal(err)
		}
		up = append(up, ConvergenceLevel{H: MeanCellSize(coarse), Fields: a.Fields})
		d, err := CheckAccuracy(w, fine, coarse, coarse.CellArea, nil, f, 8, 0)
		if err != nil {
			t.Fatal(err)
		}
		down = append(down, ConvergenceLevel{H: MeanCellSize(coarse), Fields: d.Fields})
		// Exact means averaged: only the order-8 quadrature error and rounding remain
		// (1e-14 relative).
		if d.MaxLInf > 1e-14 {
			t.Errorf("n=%d: coarsening of exact means has l∞ %.2e, want rounding", n, d.MaxLInf)
		}
	}
	cv := Convergence(up)
	fc := cv.Fields[0]
	for _, o := range []*float64{fc.OrderL1, fc.OrderL2, fc.OrderLInf} {
		if o == nil || math.Abs(*o-1) > 0.05 {
			t.Errorf("observed order %v, want 1 ± 0.05 (errors l1 %v)", o, fc.L1)
		}
	}
	if p, ok := ObservedOrder([]float64{1, 0.5, 0.25}, []float64{3, 0.75, 0.1875}); !ok || math.Abs(p-2) > 1e-12 {
		t.Errorf("ObservedOrder on exact h² data = %g, %v; want 2", p, ok)
	}
	if _, ok := ObservedOrder([]float64{1, 0.5}, []float64{0, 0}); ok {
		t.Error("ObservedOrder with zero errors reports an order")
	}
}

// TestAccuracySample: on an evenly spaced sample of the targets the l2 norm agrees with
// the full evaluation to a few per cent (sampling error ~ 1/√sample for a smooth error
// field; common practice), and so does l∞ (a maximum over the sample, normalised by the
// sample's own largest value).
func TestAccuracySample(t *testing.T) {
	fine, coarse := planeQuads(t, 64), planeQuads(t, 32)
	w := coarsen2(32)
	p := Adjoint(w, fine.CellArea, coarse.CellArea)
	f := DefaultFields(grids.Plane, 1, 1)[:1]
	full, err := CheckAccuracy(p, coarse, fine, fine.CellArea, nil, f, 8, 0)
	if err != nil {
		t.Fatal(err)
	}
	part, err := CheckAccuracy(p, coarse, fine, fine.CellArea, nil, f, 8, 500)
	if err != nil {
		t.Fatal(err)
	}
	if part.SampledTargets > 600 || full.SampledTargets != fine.NumCells() {
		t.Fatalf("sampled %d and %d targets", part.SampledTargets, full.SampledTargets)
	}
	if rel := math.Abs(part.MaxL2-full.MaxL2) / full.MaxL2; rel > 0.05 || math.Abs(part.MaxLInf-full.MaxLInf) > 0.05*full.MaxLInf {
		t.Errorf("sample l2 %.4g vs full %.4g (rel %.2g); l∞ %.4g vs %.4g", part.MaxL2, full.MaxL2, rel, part.MaxLInf, full.MaxLInf)
	}
}
