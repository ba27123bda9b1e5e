package remap

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// roundTol: partition of unity and linear precision on the plane hold to rounding; a few
// hundred ulps of the quantities involved (sums of up to ~50 terms of size ≤ 1).
const roundTol = 1e-13

// randomConvexPolygon returns n ≥ 3 points of an ellipse centred near the origin (so the
// origin can lie inside or outside), counter-clockwise, at random angles: a strictly
// convex polygon.
func randomConvexPolygon(rng *rand.Rand, n int, cx, cy float64) [][2]float64 {
	ang := make([]float64, n)
	for i := range ang {
		ang[i] = 2 * math.Pi * rng.Float64()
	}
	sortFloats(ang)
	a, b := 0.5+rng.Float64(), 0.5+rng.Float64()
	rot := 2 * math.Pi * rng.Float64()
	sr, cr := math.Sincos(rot)
	q := make([][2]float64, n)
	for i, t := range ang {
		x, y := a*math.Cos(t), b*math.Sin(t)
		q[i] = [2]float64{cx + cr*x - sr*y, cy + sr*x + cr*y}
	}
	return q
}

func sortFloats(x []float64) {
	for i := 1; i < len(x); i++ {
		for j := i; j > 0 && x[j] < x[j-1]; j-- {
			x[j], x[j-1] = x[j-1], x[j]
		}
	}
}

// TestPolygonWeights checks the defining properties of barycentric and mean value
// coordinates (Floater 2003, Comput. Aided Geom. Des. 20:19–27, §2–3): partition of unity,
// linear precision Σ λ_i q_i = x, positivity inside convex polygons, the Lagrange property
// at vertices and linear interpolation along edges; and the symmetric value 1/n at the
// centre of a regular n-gon (derived: every vertex sees the same angles and distance).
func TestPolygonWeights(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for trial := 0; trial < 2000; trial++ {
		n := 3 + rng.IntN(8)
		q := randomConvexPolygon(rng, n, 0.8*(2*rng.Float64()-1), 0.8*(2*rng.Float64()-1))
		w := make([]float64, n)
		out := polygonWeights(q, w)
		var sum, sx, sy, mag float64
		for i := range w {
			sum += w[i]
			sx += w[i] * q[i][0]
			sy += w[i] * q[i][1]
			mag += math.Abs(w[i]) * (1 + math.Hypot(q[i][0], q[i][1]))
		}
		// Far outside, the coordinates extrapolate with large weights of both signs;
		// rounding is relative to their magnitude.
		if tol := roundTol * mag; math.Abs(sum-1) > tol || math.Hypot(sx, sy) > tol {
			t.Fatalf("trial %d (n=%d, outside %.3g): Σλ−1 = %.3g, |Σλq| = %.3g", trial, n, out, sum-1, math.Hypot(sx, sy))
		}
		if inside := windingNumber(q) != 0; inside != (out == 0) {
			t.Fatalf("trial %d: winding and outside share disagree (%v, %g)", trial, inside, out)
		}
		if out == 0 {
			for i, x := range w {
				if x < 0 {
					t.Fatalf("trial %d: negative weight %g at vertex %d inside a convex polygon", trial, x, i)
				}
			}
		}
	}
	// Lagrange property and edges: shift the polygon so that the origin is a vertex or an
	// edge point.
	for trial := 0; trial < 200; trial++ {
		n := 3 + rng.IntN(8)
		q := randomConvexPolygon(rng, n, 0, 0)
		k := rng.IntN(n)
		s := rng.Float64()
		a, b := q[k], q[(k+1)%n]
		for _, target := range []struct {
			x    [2]float64
			want map[int]float64
		}{
			{a, map[int]float64{k: 1}},
			{[2]float64{a[0] + s*(b[0]-a[0]), a[1] + s*(b[1]-a[1])}, map[int]float64{k: 1 - s, (k + 1) % n: s}},
		} {
			sh := make([][2]float64, n)
			for i := range q {
				sh[i] = [2]float64{q[i][0] - target.x[0], q[i][1] - target.x[1]}
			}
			w := make([]float64, n)
			if out := polygonWeights(sh, w); out > roundTol {
				t.Fatalf("boundary point reported %.3g outside", out)
			}
			for i := range w {
				// 1e-12: the shifted coordinates carry the rounding of the shift, and the
				// edge parameter is recovered from distances.
				if d := math.Abs(w[i] - target.want[i]); d > 1e-12 {
					t.Fatalf("trial %d n=%d vertex %d: weight %.17g, want %.17g", trial, n, i, w[i], target.want[i])
				}
			}
		}
	}
	for n := 3; n <= 12; n++ {
		q := make([][2]float64, n)
		for i := range q {
			s, c := math.Sincos(2 * math.Pi * float64(i) / float64(n))
			q[i] = [2]float64{c, s}
		}
		w := make([]float64, n)
		polygonWeights(q, w)
		for i, x := range w {
			if math.Abs(x-1/float64(n)) > roundTol {
				t.Errorf("regular %d-gon centre: weight %d = %.17g, want 1/%d", n, i, x, n)
			}
		}
	}
}

// sphereLinearMeans returns the exact cell means of f(x) = c + a·x on a spherical mesh:
// c + a·x̄ with x̄ the cell's first moment over its area (exact geometry, grids).
func sphereLinearMeans(m *grids.Mesh, c float64, a r3.Vec) []float64 {
	out := make([]float64, m.NumCells())
	r2 := m.Radius * m.Radius
	for i := range out {
		out[i] = c + r3.Dot(a, m.CellMoment(i))/(m.CellArea[i]/r2)
	}
	return out
}

// rowSumDefect returns max |Σ_s W_ts − 1| over covered targets and the number of negative
// weights.
func rowSumDefect(m *weights.Map) (float64, int) {
	rs := make([]float64, m.W.Rows)
	m.W.RowSumsTo(rs)
	worst := 0.0
	for t, r := range rs {
		if m.Target.Coverage != nil && m.Target.Coverage[t] == 0 {
			continue
		}
		worst = math.Max(worst, math.Abs(r-1))
	}
	neg := 0
	for _, v := range m.W.Values {
		if v < 0 {
			neg++
		}
	}
	return worst, neg
}

// TestInterpolateSphereLinear: interpolation is consistent (row sums 1, DESIGN.md §5) and
// reproduces f = c + a·x up to the curvature error, which is second order in the cell
// size: the observed order between a mesh and its refinement by 2 must be ≥ 1.8 (analytic:
// cell means of a·x are a·x̄ with 1 − |x̄| = O(h²), the gnomonic projection is exact for
// lines and distorts lengths by O(h²)). All dual polygons of these meshes are convex, so
// no weight may be negative (Floater 2003; bilinear weights are products of shares).
func TestInterpolateSphereLinear(t *testing.T) {
	// A target unrelated to every source (N = 17 is no source's resolution).
	tgt, err := grids.NewCubedSphere(17, 0)
	mustMesh(t, tgt, err)
	a := r3.Vec{X: 0.3, Y: -0.5, Z: 0.8}
	const c0 = 2.0
	type gen func(k int) (*grids.Mesh, error)
	cases := []struct {
		name string
		mk   gen
	}{
		{"cubed", func(k int) (*grids.Mesh, error) { return grids.NewCubedSphere(11*k, 0) }},
		{"icosdual", func(k int) (*grids.Mesh, error) { return grids.NewIcosahedralDual(2+k, 0) }},
		{"icostri", func(k int) (*grids.Mesh, error) { return grids.NewIcosahedral(2+k, 0) }},
		{"latlon", func(k int) (*grids.Mesh, error) {
			return grids.NewLatLon(grids.LatLonSpec{NLon: 45 * k, NLat: 22 * k, Lon0: -180})
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var errs [2]float64
			for i, k := range []int{1, 2} {
				src, err := tc.mk(k)
				mustMesh(t, src, err)
				m, err := Build(src, tgt, Options{Method: Interpolate, Order: 1})
				if err != nil {
					t.Fatal(err)
				}
				rs, neg := rowSumDefect(m)
				if rs > roundTol || neg > 0 {
					t.Errorf("%s: row-sum defect %.3g, %d negative weights", src.Name, rs, neg)
				}
				got := make([]float64, tgt.NumCells())
				m.ApplyTo(got, sphereLinearMeans(src, c0, a))
				for j, p := range tgt.CellCentroid {
					if m.Target.Coverage[j] != 1 {
						t.Fatalf("%s: target %d uncovered on a global source", src.Name, j)
					}
					errs[i] = math.Max(errs[i], math.Abs(got[j]-c0-r3.Dot(a, p)))
				}
			}
			order := math.Log2(errs[0] / errs[1])
			t.Logf("max errors %.3g, %.3g: observed order %.2f", errs[0], errs[1], order)
			if order < 1.8 {
				t.Errorf("observed order %.2f < 1.8", order)
			}
		})
	}
}

// TestInterpolatePlaneLinear: on the plane the interpolant reproduces linear functions to
// rounding (cell means of a linear function are its values at the centroids; barycentric,
// mean value and bilinear coordinates have linear precision, Floater 2003), including on
// perturbed meshes whose dual polygons are irregular; row sums are 1. On a bounded mesh
// a target is covered exactly when it lies inside the outer ring of source centroids:
// for a regular quad source that is the rectangle [dx/2, L−dx/2] × [dy/2, L−dy/2]
// (derived: the dual polygons are the squares between four centroids).
func TestInterpolatePlaneLinear(t *testing.T) {
	lin := func(p r3.Vec) float64 { return 2 + 3*p.X - 5*p.Y }
	tri, err := grids.NewPlane(grids.PlaneSpec{NX: 13, NY: 11, Lx: 1, Ly: 1, Triangles: true})
	mustMesh(t, tri, err)
	cases := []struct {
		name     string
		src, tgt *grids.Mesh
		hull     [4]float64 // covered region when known: x0, x1, y0, y1
	}{
		{"quads", rectPlane(t, 16, 12, 0, 0, 1, 1, 0, 0), rectPlane(t, 23, 17, 0, 0, 1, 1, 0.2, 7), [4]float64{1.0 / 32, 1 - 1.0/32, 1.0 / 24, 1 - 1.0/24}},
		{"jittered", rectPlane(t, 20, 20, 0, 0, 1, 1, 0.22, 3), tri, [4]float64{}},
		{"triangles", tri, rectPlane(t, 19, 21, 0, 0, 1, 1, 0.2, 5), [4]float64{}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Build(tc.src, tc.tgt, Options{Method: Interpolate, Order: 1})
			if err != nil {
				t.Fatal(err)
			}
			src := make([]float64, tc.src.NumCells())
			for i, p := range tc.src.CellCentroid {
				src[i] = lin(p)
			}
			got := make([]float64, tc.tgt.NumCells())
			m.ApplyTo(got, src)
			rs, _ := rowSumDefect(m)
			worst, covered := 0.0, 0
			for j, p := range tc.tgt.CellCentroid {
				cov := m.Target.Coverage[j]
				if tc.hull != [4]float64{} {
					in := p.X > tc.hull[0] && p.X < tc.hull[1] && p.Y > tc.hull[2] && p.Y < tc.hull[3]
					if in != (cov == 1) {
						t.Errorf("target %d at (%.4f, %.4f): coverage %g, inside the centroid hull %v", j, p.X, p.Y, cov, in)
					}
				}
				if cov == 0 {
					if m.W.RowStart[j] != m.W.RowStart[j+1] {
						t.Errorf("uncovered target %d has a non-empty row", j)
					}
					continue
				}
				covered++
				worst = math.Max(worst, math.Abs(got[j]-lin(p)))
			}
			t.Logf("%d of %d targets covered; linear error %.3g, row-sum defect %.3g", covered, len(got), worst, rs)
			// 1e-13: |f| ≤ 10 here; rounding of weights and centroids only.
			if worst > 1e-13 || rs > roundTol {
				t.Errorf("linear error %.3g, row-sum defect %.3g", worst, rs)
			}
			if covered < len(got)/2 {
				t.Errorf("only %d of %d targets covered", covered, len(got))
			}
		})
	}
}

// TestInterpolatePeriodicLinearPrecision: on doubly periodic planes every target is
// covered, row sums are 1 and the weights reproduce the target point from the minimum
// images of the source centroids (linear precision, Floater 2003), also across the
// periodic seams.
func TestInterpolatePeriodicLinearPrecision(t *testing.T) {
	srcs := []*grids.Mesh{periodicPlane(t, 17, 13, 1, 0.2, 11), periodicPlane(t, 12, 12, 1, 0, 0)}
	ptri, err := grids.NewPlane(grids.PlaneSpec{NX: 9, NY: 10, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true, Triangles: true})
	mustMesh(t, ptri, err)
	srcs = append(srcs, ptri)
	tgt := periodicPlane(t, 25, 23, 1, 0.2, 12)
	for i, src := range srcs {
		t.Run(fmt.Sprint(i), func(t *testing.T) {
			m, err := Build(src, tgt, Options{Method: Interpolate, Order: 1})
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for j, p := range tgt.CellCentroid {
				if m.Target.Coverage[j] != 1 {
					t.Fatalf("target %d uncovered on a periodic source", j)
				}
				var sx, sy float64
				for k := m.W.RowStart[j]; k < m.W.RowStart[j+1]; k++ {
					q := src.Unwrap(src.CellCentroid[m.W.ColIndex[k]], p)
					sx += m.W.Values[k] * (q.X - p.X)
					sy += m.W.Values[k] * (q.Y - p.Y)
				}
				worst = math.Max(worst, math.Hypot(sx, sy))
			}
			rs, _ := rowSumDefect(m)
			if worst > roundTol || rs > roundTol {
				t.Errorf("linear precision defect %.3g, row-sum defect %.3g", worst, rs)
			}
		})
	}
}

// TestInterpolateContinuity: the interpolant is continuous (property of the scheme: the
// dual polygons tile the surface and neighbouring schemes agree on shared sides, Floater
// 2003 for mean value coordinates on a common edge). Random cell values are evaluated at
// 10,000 points along paths that cross the poles, the date line and periodic seams; every
// step larger than jumpTol is bisected 40 times, and a difference that survives is a jump.
func TestInterpolateContinuity(t *testing.T) {
	// jumpTol: with values in [0, 1] and cells ≥ 0.1 rad (or 1/20 of the plane) the
	// interpolant changes by at most ~30 per unit length, ~1e-3 per sample step here.
	const jumpTol = 0.02
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18, Lon0: -180})
	mustMesh(t, ll, err)
	c7, err := grids.NewCubedSphere(7, 0)
	mustMesh(t, c7, err)
	id2, err := grids.NewIcosahedralDual(2, 0)
	mustMesh(t, id2, err)
	it2, err := grids.NewIcosahedral(2, 0)
	mustMesh(t, it2, err)
	overPole := func(s float64) r3.Vec { // from 80°N, 10°E over the pole to 80°N, 170°W
		a, b := sphereLL(10, 80), sphereLL(-170, 80)
		return slerpArc(a, b, s)
	}
	dateLine := func(s float64) r3.Vec { return slerpArc(sphereLL(170, -5), sphereLL(-170, 3), s) }
	southPole := func(s float64) r3.Vec { return slerpArc(sphereLL(-100, -75), sphereLL(80, -75), s) }
	spherePaths := []func(float64) r3.Vec{overPole, dateLine, southPole}
	cases := []struct {
		m     *grids.Mesh
		paths []func(float64) r3.Vec
	}{
		{ll, spherePaths}, {c7, spherePaths}, {id2, spherePaths}, {it2, spherePaths},
		{periodicPlane(t, 20, 20, 1, 0.2, 21), []func(float64) r3.Vec{
			func(s float64) r3.Vec { return r3.Vec{X: -0.3 + 2*s, Y: 0.1 + 0.8*s} },
		}},
	}
	rng := rand.New(rand.NewPCG(6, 6))
	for _, tc := range cases {
		vals := make([]float64, tc.m.NumCells())
		for i := range vals {
			vals[i] = rng.Float64()
		}
		st := interpolationStencils(tc.m)()
		eval := func(p r3.Vec) float64 {
			c, w, ok := st(p, nil, nil)
			if !ok {
				t.Fatalf("%s: point %v uncovered", tc.m.Name, p)
			}
			v := 0.0
			for i, s := range c {
				v += w[i] * vals[s]
			}
			return v
		}
		for k, path := range tc.paths {
			const n = 10000
			prev := eval(path(0))
			for i := 1; i <= n; i++ {
				s0, s1 := float64(i-1)/n, float64(i)/n
				cur := eval(path(s1))
				if math.Abs(cur-prev) > jumpTol {
					a, b, fa, fb := s0, s1, prev, cur
					for j := 0; j < 40; j++ {
						m := (a + b) / 2
						fm := eval(path(m))
						if math.Abs(fm-fa) > math.Abs(fb-fm) {
							b, fb = m, fm
						} else {
							a, fa = m, fm
						}
					}
					if math.Abs(fb-fa) > jumpTol/2 {
						t.Errorf("%s path %d: jump %.3g at %v", tc.m.Name, k, fb-fa, path(a))
					}
				}
				prev = cur
			}
		}
	}
}

// sphereLL returns the unit vector at longitude and latitude in degrees.
func sphereLL(lon, lat float64) r3.Vec {
	return sphereFromLonLatDeg(lon, lat)
}

// slerpArc returns the point a share s along the great arc from a to b.
func slerpArc(a, b r3.Vec, s float64) r3.Vec {
	om := math.Acos(math.Max(-1, math.Min(1, r3.Dot(a, b))))
	sa, sb := math.Sin((1-s)*om)/math.Sin(om), math.Sin(s*om)/math.Sin(om)
	return r3.Unit(r3.Add(r3.Scale(sa, a), r3.Scale(sb, b)))
}

// latLonWithPoles rebuilds grids.NewLatLon(nlon, nlat, lon0) from a MeshSpec with both pole
// vertices moved off the axis by off (as a grid read from a file may have them).
func latLonWithPoles(t testing.TB, nlon, nlat int, lon0, off float64) *grids.Mesh {
	t.Helper()
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: nlon, NLat: nlat, Lon0: lon0})
	mustMesh(t, ll, err)
	spec := grids.MeshSpec{Name: "lat-lon, moved poles", Surface: grids.Sphere,
		Verts: append([]r3.Vec(nil), ll.Verts...), CellStart: ll.CellStart, CellVerts: ll.CellVerts}
	for h := range ll.CellVerts {
		spec.CellEdgeKinds = append(spec.CellEdgeKinds, ll.Kind(int(ll.CellEdges[h])))
	}
	for v, p := range spec.Verts {
		if p.X == 0 && p.Y == 0 {
			spec.Verts[v] = r3.Unit(r3.Vec{X: off, Y: off / 2, Z: p.Z})
		}
	}
	m, err := grids.Build(spec)
	mustMesh(t, m, err)
	return m
}

// TestInterpolateLatLonPoles: the pole of a lat–lon grid gets the polar scheme when it is
// on the axis to 1e-12 (poleShare), and a great-arc dual polygon otherwise; then the
// slivers between that polygon's great arcs and the neighbouring rectangles' parallels
// (≤ Δλ²/16 rad, derived in gapSlack; here 5e-4 rad wide at 77.3°) must still be
// covered. Every one of 20,000 points within 16° of a pole is covered with weights summing to 1, and the field f = c + a·x
// is reproduced to the curvature error of TestInterpolateSphereLinear (the 1e-2 bound is
// from memory of that test's coarse-grid errors, ≈5e-3 at 8°).
func TestInterpolateLatLonPoles(t *testing.T) {
	rng := rand.New(rand.NewPCG(10, 10))
	a := r3.Vec{X: 0.3, Y: -0.5, Z: 0.8}
	for _, tc := range []struct {
		off   float64
		polar bool
	}{{0, true}, {1e-17, true}, {1e-9, false}} {
		m := latLonWithPoles(t, 45, 22, -180, tc.off)
		d := newCentroidDual(m)
		polar := 0
		for _, k := range d.kind {
			if k == dualPolar {
				polar++
			}
		}
		if (polar == 2) != tc.polar {
			t.Errorf("pole offset %g: %d polar duals", tc.off, polar)
		}
		vals := sphereLinearMeans(m, 2, a)
		st := interpolationStencils(m)()
		worst := 0.0
		for i := 0; i < 20000; i++ {
			lat := math.Pi/2 - rng.Float64()*16*math.Pi/180
			if i%2 == 1 {
				lat = -lat
			}
			p := sphereFromLonLatDeg(360*rng.Float64(), lat*180/math.Pi)
			c, w, ok := st(p, nil, nil)
			if !ok {
				t.Fatalf("pole offset %g: point %v near the pole uncovered", tc.off, p)
			}
			sum, v := 0.0, 0.0
			for k, s := range c {
				sum += w[k]
				v += w[k] * vals[s]
			}
			if math.Abs(sum-1) > roundTol {
				t.Fatalf("pole offset %g: weights sum to %.17g", tc.off, sum)
			}
			worst = math.Max(worst, math.Abs(v-2-r3.Dot(a, p)))
		}
		if worst > 1e-2 {
			t.Errorf("pole offset %g: linear field error %.3g near the poles", tc.off, worst)
		}
		t.Logf("pole offset %g: %d polar duals, worst linear error near the poles %.3g", tc.off, polar, worst)
	}
}
