package grids_test

import (
	"gonum.org/v1/gonum/integrate/quad"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/golang/geo/s2"
	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

const (
	// exactRelTol: cell areas of the generators against closed forms; the bound
	// for exact geometry (observed errors are ~1e-15).
	exactRelTol = 1e-12
)

// TestLatLonAreasExact: every cell of a lat–lon grid has area R²Δλ(sin φ₂ − sin φ₁)
// (REFERENCES.md, exact because the edges are parallels), including the pole triangles;
// and the two check values of REFERENCES.md [D]: with R = 6.37122e6 m a 1°×1° equatorial
// cell is 1.23645e10 m² and a pole-touching one 1.07904e8 m² (6 significant digits).
func TestLatLonAreasExact(t *testing.T) {
	for _, lon0 := range []float64{0, -180, 0.37} {
		m, err := grids.NewLatLon(grids.LatLonSpec{NLon: 360, NLat: 180, Lon0: lon0})
		if err != nil {
			t.Fatal(err)
		}
		d := math.Pi / 180
		worst := 0.0
		for j := 0; j < 180; j++ {
			p1, p2 := (-90+float64(j))*d, (-89+float64(j))*d
			want := m.Radius * m.Radius * d * (math.Sin(p2) - math.Sin(p1))
			for i := 0; i < 360; i++ {
				got := m.CellArea[j*360+i]
				worst = math.Max(worst, math.Abs(got-want)/want)
			}
		}
		if worst > exactRelTol {
			t.Errorf("lon0=%g: worst relative cell-area error %.3g", lon0, worst)
		}
		checks := []struct {
			cell int
			want float64
		}{{90*360 + 17, 1.23645e10}, {179*360 + 5, 1.07904e8}, {3, 1.07904e8}}
		for _, c := range checks {
			if rel := math.Abs(m.CellArea[c.cell]-c.want) / c.want; rel > 5e-6 { // 6 digits quoted
				t.Errorf("cell %d area %.6g m², REFERENCES.md gives %.6g", c.cell, m.CellArea[c.cell], c.want)
			}
		}
	}
}

// omega is the gnomonic cube-panel area primitive of Lauritzen & Nair 2008 (REFERENCES.md,
// formula from memory [M]; verified below against quadrature): the area of the panel
// region between the panel centre lines and the point (α, β), on the unit sphere.
func omega(alpha, beta float64) float64 {
	ta, tb := math.Tan(alpha), math.Tan(beta)
	return math.Atan(ta * tb / math.Sqrt(1+ta*ta+tb*tb))
}

func gnomonicCellArea(a1, a2, b1, b2 float64) float64 {
	return omega(a2, b2) - omega(a1, b2) - omega(a2, b1) + omega(a1, b1)
}

// TestGnomonicFormulaByQuadrature verifies the closed form first: on the gnomonic panel
// the unit-sphere area element is (1 + x² + y²)^(−3/2) dx dy with x = tan α, y = tan β
// (central projection, analytic); 20-point Gauss–Legendre on that integrand agrees with
// the closed form to 1e-14.
func TestGnomonicFormulaByQuadrature(t *testing.T) {
	xs, ws := gaussLegendre(20)
	rng := rand.New(rand.NewPCG(7, 8))
	for i := 0; i < 50; i++ {
		a1 := -math.Pi/4 + rng.Float64()*math.Pi/2
		a2 := a1 + rng.Float64()*(math.Pi/4-a1)
		b1 := -math.Pi/4 + rng.Float64()*math.Pi/2
		b2 := b1 + rng.Float64()*(math.Pi/4-b1)
		x1, x2, y1, y2 := math.Tan(a1), math.Tan(a2), math.Tan(b1), math.Tan(b2)
		q := 0.0
		for i, u := range xs {
			x := x1 + (x2-x1)*(u+1)/2
			for j, v := range xs {
				y := y1 + (y2-y1)*(v+1)/2
				q += ws[i] * ws[j] * math.Pow(1+x*x+y*y, -1.5)
			}
		}
		q *= (x2 - x1) * (y2 - y1) / 4
		if got := gnomonicCellArea(a1, a2, b1, b2); math.Abs(got-q) > 1e-14 {
			t.Fatalf("closed form %.17g, quadrature %.17g", got, q)
		}
	}
	// One panel is a sixth of the sphere [D].
	if got := gnomonicCellArea(-math.Pi/4, math.Pi/4, -math.Pi/4, math.Pi/4); math.Abs(got-4*math.Pi/6) > 1e-15 {
		t.Errorf("panel area %.17g, want 4π/6", got)
	}
}

// TestCubedSphereAreasGnomonic: every cubed-sphere cell equals the gnomonic closed form
// (Lauritzen & Nair 2008), and for N = 30 the corner/centre area ratio is 0.77097
// (REFERENCES.md [D], 5 digits).
func TestCubedSphereAreasGnomonic(t *testing.T) {
	for _, n := range []int{3, 30, 64} {
		m, err := grids.NewCubedSphere(n, 1)
		if err != nil {
			t.Fatal(err)
		}
		d := math.Pi / 2 / float64(n)
		worst := 0.0
		for p := 0; p < 6; p++ {
			for j := 0; j < n; j++ {
				for i := 0; i < n; i++ {
					a1, b1 := -math.Pi/4+float64(i)*d, -math.Pi/4+float64(j)*d
					want := gnomonicCellArea(a1, a1+d, b1, b1+d)
					got := m.CellArea[(p*n+j)*n+i]
					worst = math.Max(worst, math.Abs(got-want)/want)
				}
			}
		}
		if worst > exactRelTol {
			t.Errorf("N=%d: worst relative error against the gnomonic closed form %.3g", n, worst)
		}
		if n == 30 {
			ratio := m.CellArea[0] / m.CellArea[15*30+15]
			if math.Abs(ratio-0.77097) > 5e-6 {
				t.Errorf("corner/centre ratio %.6f, REFERENCES.md gives 0.77097", ratio)
			}
		}
	}
}

// TestPolygonAreaAgainstS2 compares spherical polygon areas with golang/geo s2's
// Loop.Area (a general-purpose reference; LIBRARIES.md notes it is accurate) on random
// convex and star-shaped non-convex polygons, including ones around both poles and across
// the date line.
func TestPolygonAreaAgainstS2(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	centres := []struct {
		name string
		c    func() r3.Vec
	}{
		{"random", func() r3.Vec { return randUnit(rng) }},
		{"north pole", func() r3.Vec { return r3.Vec{Z: 1} }},
		{"south pole", func() r3.Vec { return r3.Vec{Z: -1} }},
		{"date line", func() r3.Vec { return sphere.FromLonLat(math.Pi, (rng.Float64()-0.5)*math.Pi*0.9) }},
	}
	// s2's loop area error grows for small loops (it is absolute, ~1e-15 sr): compare
	// relative to 1e-12 where the polygon is large enough for that to be meaningful.
	const s2RelTol = 1e-12
	for _, cc := range centres {
		for _, convex := range []bool{true, false} {
			for i := 0; i < 300; i++ {
				c := cc.c()
				r := math.Pow(10, -2+1.7*rng.Float64()) // 0.01 .. 0.5 rad
				vs := starPolygon(rng, c, r, 3+rng.IntN(10), convex)
				got := sphere.PolygonArea(vs)
				pts := make([]s2.Point, len(vs))
				for k, v := range vs {
					pts[k] = s2.PointFromCoords(v.X, v.Y, v.Z)
				}
				want := s2.LoopFromPoints(pts).Area()
				if rel := math.Abs(got-want) / want; rel > s2RelTol {
					t.Fatalf("%s convex=%v r=%.3g n=%d: area %.17g, s2 %.17g (rel %.2g)", cc.name, convex, r, len(vs), got, want, rel)
				}
			}
		}
	}
}

// starPolygon returns a counter-clockwise polygon around c: vertices at sorted random
// azimuths, all at angular radius r (convex: points on a small circle) or at random radii
// in [0.3r, r] (star-shaped, generally non-convex).
func starPolygon(rng *rand.Rand, c r3.Vec, r float64, n int, convex bool) []r3.Vec {
	e1 := sphere.Normalize(r3.Cross(c, r3.Vec{X: 0.3, Y: 0.5, Z: 0.7}))
	e2 := r3.Cross(c, e1)
	az := make([]float64, n)
	for {
		for k := range az {
			az[k] = 2 * math.Pi * rng.Float64()
		}
		sortFloats(az)
		ok := true
		for k := range az { // keep azimuth gaps below π so the polygon contains c
			gap := az[(k+1)%n] - az[k]
			if k == n-1 {
				gap += 2 * math.Pi
			}
			ok = ok && gap < 0.9*math.Pi && gap > 1e-3
		}
		if ok {
			break
		}
	}
	vs := make([]r3.Vec, n)
	for k, a := range az {
		rho := r
		if !convex {
			rho = r * (0.3 + 0.7*rng.Float64())
		}
		sa, ca := math.Sincos(a)
		sr, cr := math.Sincos(rho)
		vs[k] = r3.Add(r3.Scale(cr, c), r3.Scale(sr, r3.Add(r3.Scale(ca, e1), r3.Scale(sa, e2))))
	}
	return vs
}

func sortFloats(a []float64) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j] < a[j-1]; j-- {
			a[j], a[j-1] = a[j-1], a[j]
		}
	}
}

// TestAreaAdditivity (property): cutting a convex spherical polygon along a diagonal gives
// two polygons whose areas add up to the whole (exact geometry; rounding only).
func TestAreaAdditivity(t *testing.T) {
	rapid.Check(t, func(rt *rapid.T) {
		seed := rapid.Uint64().Draw(rt, "seed")
		rng := rand.New(rand.NewPCG(seed, 1))
		c := randUnit(rng)
		r := rapid.Float64Range(1e-4, 1).Draw(rt, "radius")
		n := rapid.IntRange(4, 12).Draw(rt, "n")
		vs := starPolygon(rng, c, r, n, true)
		k := rapid.IntRange(2, n-2).Draw(rt, "k")
		whole := sphere.PolygonArea(vs)
		a := sphere.PolygonArea(vs[:k+1])
		b := sphere.PolygonArea(append([]r3.Vec{vs[0]}, vs[k:]...))
		if math.Abs(a+b-whole) > 1e-14*whole {
			rt.Fatalf("parts %.17g + %.17g ≠ whole %.17g", a, b, whole)
		}
	})
}

// TestEdgeGeometryLatLon: parallel edges have length R cos φ Δλ and meridian edges RΔφ
// (analytic), and the midpoint of a parallel edge stays on its parallel.
func TestEdgeGeometryLatLon(t *testing.T) {
	m, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18})
	if err != nil {
		t.Fatal(err)
	}
	d := 10 * math.Pi / 180
	for e := 0; e < m.NumEdges(); e++ {
		a := m.Verts[m.EdgeVerts[e][0]]
		var want float64
		if m.Kind(e) == grids.Parallel {
			_, lat := sphere.LonLat(a)
			want = m.Radius * math.Cos(lat) * d
			if math.Abs(m.EdgeMid[e].Z-a.Z) > 1e-15 {
				t.Errorf("edge %d midpoint left its parallel", e)
			}
		} else {
			want = m.Radius * d
		}
		if math.Abs(m.EdgeLength[e]-want) > 1e-12*want {
			t.Errorf("edge %d (%v) length %.17g, want %.17g", e, m.Kind(e), m.EdgeLength[e], want)
		}
	}
}

// TestPlaneGeometry: a planar periodic mesh of equal squares (or right triangles) has
// cells of area dx·dy (or half) and dual areas dx·dy (analytic).
func TestPlaneGeometry(t *testing.T) {
	for _, tri := range []bool{false, true} {
		m, err := grids.NewPlane(grids.PlaneSpec{NX: 6, NY: 4, Lx: 600, Ly: 200, PeriodicX: true, PeriodicY: true, Triangles: tri})
		if err != nil {
			t.Fatal(err)
		}
		want := 100.0 * 50
		if tri {
			want /= 2
		}
		for c, a := range m.CellArea {
			if math.Abs(a-want) > 1e-9 {
				t.Fatalf("tri=%v cell %d area %g, want %g", tri, c, a, want)
			}
		}
		for v, a := range m.DualArea {
			if math.Abs(a-5000) > 1e-9 {
				t.Fatalf("tri=%v vertex %d dual area %g, want 5000", tri, v, a)
			}
		}
	}
}

func randUnit(rng *rand.Rand) r3.Vec {
	for {
		p := r3.Vec{X: 2*rng.Float64() - 1, Y: 2*rng.Float64() - 1, Z: 2*rng.Float64() - 1}
		if n := r3.Norm(p); n > 0.1 && n < 1 {
			return r3.Scale(1/n, p)
		}
	}
}

// gaussLegendre returns n-point Gauss–Legendre nodes and weights on [−1, 1] (gonum's quad).
func gaussLegendre(n int) ([]float64, []float64) {
	x, w := make([]float64, n), make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	return x, w
}
