package remap

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

// TestGaussJacobi01: an n-point Gauss rule for the weight s^b on [0, 1] integrates s^k
// exactly for k ≤ 2n − 1 (Gauss's theorem; any numerical analysis text): ∫₀¹ s^(b+k) ds =
// 1/(b + k + 1).
func TestGaussJacobi01(t *testing.T) {
	const tol = 1e-15 // a few ulps of sums of O(1) terms
	for _, b := range []int{0, 1} {
		for n := 1; n <= 7; n++ {
			x, w := gaussJacobi01(n, b)
			for k := 0; k <= 2*n-1; k++ {
				got := 0.0
				for i := range x {
					got += w[i] * math.Pow(x[i], float64(k))
				}
				want := 1 / float64(b+k+1)
				if math.Abs(got-want) > tol*4 {
					t.Errorf("b=%d n=%d: ∫ s^%d = %.17g, want %.17g", b, n, k+b, got, want)
				}
			}
		}
	}
}

// quadIntegral integrates the field g over cell c of m with the moment integrator's nodes
// in the cell's own frame.
func quadIntegral(m *grids.Mesh, c, p int, g analytic.Field) float64 {
	f := newLocalFrame(m, c)
	mi := newMomentIntegrator(newQuadRule(p))
	poly := cellPolygon(m, c, m.Verts[m.CellVerts[m.CellStart[c]]], nil)
	sum := 0.0
	mi.nodes(&f, poly, func(x, y, w float64) { sum += w * g(f.unproject(x, y)) })
	return sum
}

func one(r3.Vec) float64 { return 1 }

// boxArea is R²Δλ(sin φ₂ − sin φ₁) on the unit sphere (REFERENCES.md [D]) with the
// difference of sines written as 2 cos((φ₁+φ₂)/2) sin((φ₂−φ₁)/2), which keeps full
// relative precision next to the poles (the plain difference loses 1e-13 there).
func boxArea(l1, l2, p1, p2 float64) float64 {
	return (l2 - l1) * 2 * math.Cos((p1+p2)/2) * math.Sin((p2-p1)/2)
}

// TestQuadratureCellAreas: the integral of 1 by the moment quadrature over whole cells
// against their exact areas: lat–lon cells R²Δλ(sin φ₂ − sin φ₁) (REFERENCES.md [D];
// analytic.LatLonCellArea), including the pole triangles with their small-circle side, and
// geodesic polygons by the Van Oosterom & Strackee triangle formula (the mesh's CellArea).
// On lat–lon cells this includes the curved-side parametrisation (see also
// TestQuadratureArcSegments).
func TestQuadratureCellAreas(t *testing.T) {
	ll2, err := grids.NewLatLon(grids.LatLonSpec{NLon: 180, NLat: 90, Lon0: 0.37})
	mustMesh(t, ll2, err)
	ll10, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18})
	mustMesh(t, ll10, err)
	ll30, err := grids.NewLatLon(grids.LatLonSpec{NLon: 12, NLat: 6})
	mustMesh(t, ll30, err)
	c24, err := grids.NewCubedSphere(24, 0)
	mustMesh(t, c24, err)
	i4, err := grids.NewIcosahedralDual(4, 0)
	mustMesh(t, i4, err)
	cases := []struct {
		name string
		m    *grids.Mesh
		// tol: relative area error. The rule's error is O(h⁸) relative (see newQuadRule):
		// measured 2e-14 on 2° cells, 1.1e-13 on N=24 cells, 1.2e-10 on 10° cells; 30°
		// cells are far outside the design range (measured 7e-7) and only show that the
		// error stays bounded there.
		tol float64
	}{
		{"latlon2", ll2, 1e-13},
		{"latlon10", ll10, 1e-9},
		{"latlon30", ll30, 1e-5},
		{"cubed24", c24, 1e-12},
		{"icosdual4", i4, 1e-12},
	}
	for _, tc := range cases {
		for _, p := range []int{2, 3} {
			worst := 0.0
			for c := 0; c < tc.m.NumCells(); c++ {
				got := quadIntegral(tc.m, c, p, one)
				want := tc.m.CellArea[c] / (tc.m.Radius * tc.m.Radius)
				if isLatLonCell(tc.m, c) {
					var buf []r3.Vec
					l1, l2, p1, p2 := lonLatBounds(tc.m.CellPoints(c, buf))
					want = boxArea(l1, l2, p1, p2)
				}
				worst = math.Max(worst, math.Abs(got-want)/want)
			}
			t.Logf("%s p=%d: worst relative area error %.2g", tc.name, p, worst)
			if worst > tc.tol {
				t.Errorf("%s p=%d: worst relative area error %.3g > %.g", tc.name, p, worst, tc.tol)
			}
		}
	}
}

// TestQuadratureFieldIntegrals: cell integrals of the smooth and oscillatory fields of
// REFERENCES.md by the moment quadrature against independent high-order rules
// (conserve/analytic: tensor Gauss–Legendre in (λ, φ) on lat–lon cells, a fan of
// conical-product rules on geodesic polygons).
func TestQuadratureFieldIntegrals(t *testing.T) {
	ll2, err := grids.NewLatLon(grids.LatLonSpec{NLon: 180, NLat: 90, Lon0: 0.37})
	mustMesh(t, ll2, err)
	c24, err := grids.NewCubedSphere(24, 0)
	mustMesh(t, c24, err)
	// tol: relative to the cell's area times the field's range (2). Smooth (a degree-2
	// polynomial in 3-D): the O(h⁸) error of the rule, measured 1.7e-13. Oscillatory
	// (degree 32 on 2°–4° cells, kh up to ~1.2): a degree-7 rule errs by roughly
	// (kh)⁸/8! ~ 1e-4 at worst, measured 3.3e-8; this is the quadrature error of the
	// means that enter the fit, well below the reconstruction error on that field.
	cases := []struct {
		name   string
		f      analytic.Field
		tol    float64
		meshes []*grids.Mesh
	}{
		{"smooth", analytic.Smooth, 1e-12, []*grids.Mesh{ll2, c24}},
		{"oscillatory", analytic.Oscillatory, 1e-6, []*grids.Mesh{ll2, c24}},
	}
	for _, tc := range cases {
		for _, m := range tc.meshes {
			for _, p := range []int{2, 3} {
				worst := 0.0
				for c := 0; c < m.NumCells(); c += 7 {
					got := quadIntegral(m, c, p, tc.f)
					var buf []r3.Vec
					vs := m.CellPoints(c, buf)
					var want float64
					if isLatLonCell(m, c) {
						l1, l2, p1, p2 := lonLatBounds(vs)
						want = analytic.LatLonCellIntegral(l1, l2, p1, p2, tc.f, 12)
					} else {
						want = analytic.PolygonIntegral(vs, tc.f, 12)
					}
					a := m.CellArea[c] / (m.Radius * m.Radius)
					worst = math.Max(worst, math.Abs(got-want)/(2*a))
				}
				t.Logf("%s on %s p=%d: worst error %.2g", tc.name, m.Name, p, worst)
				if worst > tc.tol {
					t.Errorf("%s on %s p=%d: worst error %.3g > %.g", tc.name, m.Name, p, worst, tc.tol)
				}
			}
		}
	}
}

// TestQuadratureRandomRegions is a property test: for random lat–lon boxes anywhere on
// the sphere (poles and the date line included) and random geodesic triangles, the
// quadrature area matches the exact one (lat–lon box: R²Δλ(sin φ₂ − sin φ₁),
// REFERENCES.md [D]; triangle: Van Oosterom & Strackee 1983 via sphere.TriangleArea).
func TestQuadratureRandomRegions(t *testing.T) {
	// areaTol: relative; boxes up to 0.1 rad (5.7°), where the O(h⁸) error of the
	// degree-7 rule on the Jacobian reaches ~1e-12 (measured 1.2e-12).
	const areaTol = 1e-11
	mi := newMomentIntegrator(newQuadRule(2))
	rapid.Check(t, func(rt *rapid.T) {
		lat1 := rapid.Float64Range(-math.Pi/2, math.Pi/2-1e-3).Draw(rt, "lat1")
		dlat := rapid.Float64Range(1e-4, 0.1).Draw(rt, "dlat")
		lat2 := math.Min(lat1+dlat, math.Pi/2)
		lon1 := rapid.Float64Range(-math.Pi, math.Pi).Draw(rt, "lon1")
		lon2 := lon1 + rapid.Float64Range(1e-4, 0.1).Draw(rt, "dlon")
		sw, se := sphere.FromLonLat(lon1, lat1), sphere.FromLonLat(lon2, lat1)
		ne, nw := sphere.FromLonLat(lon2, lat2), sphere.FromLonLat(lon1, lat2)
		var poly []PolyVertex
		add := func(a, b r3.Vec, parallel bool) {
			v := PolyVertex{P: a}
			if parallel {
				v.M, v.D = sphere.ParallelCircle(a, b)
			}
			poly = append(poly, v)
		}
		add(sw, se, true)
		add(se, ne, false)
		if lat2 < math.Pi/2 {
			add(ne, nw, true)
			add(nw, sw, false)
		} else {
			add(ne, sw, false) // ne is the pole
		}
		c := sphere.Normalize(r3.Add(r3.Add(sw, se), r3.Add(ne, nw)))
		f := localFrame{sphere: true, c: c, inv: 1}
		f.e1 = r3.Unit(r3.Cross(c, anyPerp(c)))
		f.e2 = r3.Cross(c, f.e1)
		got := 0.0
		mi.nodes(&f, poly, func(x, y, w float64) { got += w })
		want := boxArea(lon1, lon2, lat1, lat2)
		if math.Abs(got-want) > areaTol*want {
			rt.Fatalf("box [%g,%g]×[%g,%g]: area %.17g, want %.17g", lon1, lon2, lat1, lat2, got, want)
		}
		// A geodesic triangle sw, se, ne in the same frame.
		got = 0
		mi.nodes(&f, []PolyVertex{{P: sw}, {P: se}, {P: ne}}, func(x, y, w float64) { got += w })
		want = sphere.TriangleArea(sw, se, ne)
		// Plus an absolute 1e-17: rounding of the O(0.1)-sized frame coordinates when the
		// triangle degenerates (sw = se at a pole).
		if math.Abs(got-want) > areaTol*math.Abs(want)+1e-17 {
			rt.Fatalf("triangle: area %.17g, want %.17g", got, want)
		}
	})
}

// TestQuadratureArcSegments: the curved-side rule alone. Swept from one end of a
// constant-latitude arc, it covers exactly the segment between the arc and its chord (a
// great arc, straight in the gnomonic plane), whose exact area is sphere.SegmentArea
// (spherical cap sectors minus a geodesic triangle). The error bound stated in
// momentIntegrator.integrate: Gauss–Legendre in the arc angle converges like Θ^(2m);
// with the default m = 4 the error is ≤ 1e-12 of Θ²cosφ (the area of a Θ × Θ cell
// there) for spans up to 10° at every latitude.
func TestQuadratureArcSegments(t *testing.T) {
	// arcTol: relative to Θ²cosφ, the area of a Θ × Θ cell there; measured ≤ 1.4e-13,
	// absolute errors ~1e-18: rounding of the reference, whose two O(Θ) terms cancel to
	// the O(Θ³) segment.
	const arcTol = 1e-12
	for _, p := range []int{2, 3} {
		mi := newMomentIntegrator(newQuadRule(p))
		for _, span := range []float64{0.01, 0.035, 0.1, 0.175} {
			worst := 0.0
			for lat := -1.55; lat <= 1.55; lat += 0.05 {
				a := sphere.FromLonLat(0.3, lat)
				b := sphere.FromLonLat(0.3+span, lat)
				pm, d := sphere.ParallelCircle(a, b)
				c := sphere.Normalize(r3.Add(a, b))
				f := localFrame{sphere: true, c: c, inv: 1}
				f.e1 = r3.Unit(r3.Cross(c, anyPerp(c)))
				f.e2 = r3.Cross(c, f.e1)
				got := 0.0
				x0, y0 := f.project(a)
				mi.nx = mi.nx[:0]
				mi.ny = mi.ny[:0]
				mi.nw = mi.nw[:0]
				mi.arc(&f, vec2{x0, y0}, a, b, pm, d)
				for _, w := range mi.nw {
					got += w
				}
				want := sphere.SegmentArea(a, b, pm, d)
				cl := math.Cos(lat)
				worst = math.Max(worst, math.Abs(got-want)/(span*span*cl))
			}
			t.Logf("p=%d span %g: worst segment error %.2g of Θ²cosφ", p, span, worst)
			if worst > arcTol {
				t.Errorf("p=%d span %g: segment error %.3g of Θ²cosφ > %g", p, span, worst, arcTol)
			}
		}
	}
}
