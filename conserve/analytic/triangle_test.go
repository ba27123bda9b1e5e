package analytic

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"
)

func one(r3.Vec) float64 { return 1 }

// lhuilier returns the spherical excess by L'Huilier's theorem
// (Todhunter, Spherical Trigonometry): tan(E/4)² = tan(s/2) tan((s−a)/2)
// tan((s−b)/2) tan((s−c)/2), s the half perimeter.
func lhuilier(a, b, c r3.Vec) float64 {
	ang := func(p, q r3.Vec) float64 { return math.Atan2(r3.Norm(r3.Cross(p, q)), r3.Dot(p, q)) }
	x, y, z := ang(b, c), ang(c, a), ang(a, b)
	s := (x + y + z) / 2
	return 4 * math.Atan(math.Sqrt(math.Tan(s/2)*math.Tan((s-x)/2)*math.Tan((s-y)/2)*math.Tan((s-z)/2)))
}

func TestTriangleArea(t *testing.T) {
	cases := []struct {
		name    string
		a, b, c r3.Vec
		want    float64
		tol     float64 // relative
		source  string
	}{
		// REFERENCES.md [C]: the octant has area π/2; 2 ulps.
		{"octant", r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}, math.Pi / 2, 4e-16, "REFERENCES.md [C]"},
		{"octant clockwise", r3.Vec{X: 1}, r3.Vec{Z: 1}, r3.Vec{Y: 1}, math.Pi / 2, 4e-16, "REFERENCES.md [C]"},
		{"octant unnormalised", r3.Vec{X: 3}, r3.Vec{Y: 0.5}, r3.Vec{Z: 7}, math.Pi / 2, 4e-16, "REFERENCES.md [C]"},
		// L'Huilier agrees to ~1e-14 on well-shaped triangles (REFERENCES.md [C][D]).
		{"medium", Point(0, 0), Point(1, 0.2), Point(0.4, 1), lhuilier(Point(0, 0), Point(1, 0.2), Point(0.4, 1)), 1e-14, "L'Huilier"},
		{"large", Point(0, -1), Point(2.5, 0), Point(-1, 1.2), lhuilier(Point(0, -1), Point(2.5, 0), Point(-1, 1.2)), 1e-14, "L'Huilier"},
		{"small", Point(0, 0), Point(1e-3, 0), Point(0, 1e-3), lhuilier(Point(0, 0), Point(1e-3, 0), Point(0, 1e-3)), 1e-11, "L'Huilier loses digits on small triangles"},
		{"degenerate", Point(0, 0), Point(1, 0), Point(2, 0), 0, 0, "common practice"},
	}
	for _, c := range cases {
		got := TriangleArea(c.a, c.b, c.c)
		if math.Abs(got-c.want) > c.tol*c.want {
			t.Errorf("%s: area %.17g, want %.17g (%s)", c.name, got, c.want, c.source)
		}
	}
}

// tolArea: relative error of the integral of 1 at n = 20 on any triangle
// (measured ≤ 3e-15 on the octant, the slowest piece). tolAreaAbs: the
// triple product of unit vectors carries about 1e-16 absolute rounding,
// which dominates for nearly collinear triangles.
const (
	tolArea    = 1e-14
	tolAreaAbs = 1e-15
)

// drawTriangle draws three points in a cap of random angular radius
// (log-uniform in [1e-4, 1.5] rad, so edges reach 3 rad and the splitting
// into halves is exercised).
func drawTriangle(t *rapid.T) (a, b, c r3.Vec) {
	centre := drawPoint(t, "centre")
	r := math.Exp(rapid.Float64Range(math.Log(1e-4), math.Log(1.5)).Draw(t, "log-radius"))
	return drawCapPoint(t, centre, r, "a"), drawCapPoint(t, centre, r, "b"), drawCapPoint(t, centre, r, "c")
}

func TestTriangleIntegralOfOne(t *testing.T) {
	// The integral of 1 is the spherical excess of Van Oosterom & Strackee
	// (1983) (REFERENCES.md [C]).
	rapid.Check(t, func(t *rapid.T) {
		a, b, c := drawTriangle(t)
		want := TriangleArea(a, b, c)
		got := SphericalTriangleIntegral(a, b, c, one, 20)
		if math.Abs(got-want) > tolArea*want+tolAreaAbs {
			t.Fatalf("∫1 = %.17g, excess %.17g (rel %.2g)", got, want, math.Abs(got-want)/want)
		}
		if got2 := SphericalTriangleIntegral(c, b, a, one, 20); math.Abs(got2-got) > tolArea*want+tolAreaAbs {
			t.Fatalf("orientation changes the integral: %v vs %v", got, got2)
		}
		// A field of either sign: the orientation must not flip its sign.
		x := func(p r3.Vec) float64 { return p.X }
		i1, i2 := SphericalTriangleIntegral(a, b, c, x, 20), SphericalTriangleIntegral(a, c, b, x, 20)
		if math.Abs(i1-i2) > tolArea*want+tolAreaAbs {
			t.Fatalf("∫x depends on the orientation: %v vs %v", i1, i2)
		}
	})
}

func TestTriangleConvergence(t *testing.T) {
	// Octant (REFERENCES.md [C]: area π/2) and a large triangle (excess by
	// Van Oosterom & Strackee): geometric convergence in n. Bounds are the
	// measured errors times 5.
	big := [3]r3.Vec{Point(0, -math.Pi/4), Point(math.Pi/2, -math.Pi/4), Point(math.Pi/4, math.Pi/2)}
	cases := []struct {
		n            int
		octant, bigT float64
	}{
		{4, 6e-3, 2e-3},
		{8, 6e-6, 4e-6},
		{12, 2e-8, 6e-10},
		{16, 2e-12, 1e-12},
		{20, 1.5e-14, 1e-15},
		{24, 1e-15, 1e-15},
	}
	bigArea := TriangleArea(big[0], big[1], big[2])
	for _, c := range cases {
		eo := math.Abs(SphericalTriangleIntegral(r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}, one, c.n)-math.Pi/2) / (math.Pi / 2)
		eb := math.Abs(SphericalTriangleIntegral(big[0], big[1], big[2], one, c.n)-bigArea) / bigArea
		if eo > c.octant || eb > c.bigT {
			t.Errorf("n=%d: relative errors octant %.2g (bound %g), large %.2g (bound %g)", c.n, eo, c.octant, eb, c.bigT)
		}
	}
}

// realY returns the real orthonormal spherical harmonic Y_l^m (m < 0: the
// sin |m|λ one) at p, from the associated Legendre functions by their
// standard three-term recurrence (common analytic facts).
func realY(l, m int, p r3.Vec) float64 {
	lon, lat := LonLat(p)
	x := math.Sin(lat)
	am := m
	if am < 0 {
		am = -am
	}
	// P_am^am, then upwards in l.
	pmm := 1.0
	somx2 := math.Sqrt((1 - x) * (1 + x))
	for i := 1; i <= am; i++ {
		pmm *= float64(2*i-1) * somx2
	}
	plm := pmm
	if l > am {
		pm1 := x * float64(2*am+1) * pmm
		plm = pm1
		for ll := am + 2; ll <= l; ll++ {
			pll := (x*float64(2*ll-1)*pm1 - float64(ll+am-1)*pmm) / float64(ll-am)
			pmm, pm1 = pm1, pll
			plm = pll
		}
	}
	norm := float64(2*l+1) / (4 * math.Pi)
	for i := l - am + 1; i <= l+am; i++ {
		norm /= float64(i)
	}
	norm = math.Sqrt(norm)
	switch {
	case m > 0:
		return math.Sqrt2 * norm * plm * math.Cos(float64(m)*lon)
	case m < 0:
		return math.Sqrt2 * norm * plm * math.Sin(float64(am)*lon)
	}
	return norm * plm
}

func TestSphericalHarmonicsOrthonormal(t *testing.T) {
	// Orthonormality of the real spherical harmonics (common analytic fact),
	// integrated over the 8 octant triangles, l ≤ 4. Each Y_l^m with l ≥ 1
	// integrates to zero. tol: products are polynomials of degree ≤ 8 whose
	// values reach about 2; measured errors are 1.6e-13 at n = 24 and at
	// rounding level (≤ 2e-14) at n = 32, which is used.
	const tol = 1e-13
	type lm struct{ l, m int }
	var ys []lm
	for l := 0; l <= 4; l++ {
		for m := -l; m <= l; m++ {
			ys = append(ys, lm{l, m})
		}
	}
	for i, a := range ys {
		for j := i; j < len(ys); j++ {
			b := ys[j]
			got := sphereIntegral(func(p r3.Vec) float64 { return realY(a.l, a.m, p) * realY(b.l, b.m, p) }, 32)
			want := 0.0
			if i == j {
				want = 1
			}
			if math.Abs(got-want) > tol {
				t.Errorf("∫Y%v·Y%v = %.3g, want %v", a, b, got, want)
			}
		}
		if a.l >= 1 {
			if got := sphereIntegral(func(p r3.Vec) float64 { return realY(a.l, a.m, p) }, 24); math.Abs(got) > tol {
				t.Errorf("∫Y%v = %.3g, want 0", a, got)
			}
		}
	}
}

func TestSphereIntegralZ2(t *testing.T) {
	// ∫z² dA = 4π/3 over the unit sphere (common analytic fact).
	cases := []struct {
		n   int
		tol float64 // relative; measured 1.1e-14 at n = 20, 2e-16 at n = 24
	}{
		{20, 3e-14},
		{24, 2e-15},
	}
	for _, c := range cases {
		got := sphereIntegral(func(p r3.Vec) float64 { return p.Z * p.Z }, c.n)
		if math.Abs(got-4*math.Pi/3) > c.tol*4*math.Pi/3 {
			t.Errorf("n=%d: ∫z² = %.17g, want 4π/3", c.n, got)
		}
	}
}

func TestTriangleAdditivity(t *testing.T) {
	// Property (common practice): splitting a triangle at a point of an edge
	// gives two triangles whose integrals add up. Field: smooth, positive.
	f := func(p r3.Vec) float64 { return math.Exp(p.X) * (2 + p.Y*p.Z) }
	rapid.Check(t, func(t *rapid.T) {
		a, b, c := drawTriangle(t)
		s := rapid.Float64Range(0.05, 0.95).Draw(t, "split")
		m := unit(r3.Add(r3.Scale(1-s, b), r3.Scale(s, c))) // on the arc bc
		whole := SphericalTriangleIntegral(a, b, c, f, 20)
		parts := SphericalTriangleIntegral(a, b, m, f, 20) + SphericalTriangleIntegral(a, m, c, f, 20)
		// tol: the field is at most e·2.5, so |∫f| ≤ 7·area; 1e-13 relative
		// to that bound covers the quadrature error of three integrals.
		// The 1e-15 floor absorbs rounding of nearly degenerate triangles.
		if math.Abs(whole-parts) > 1e-13*7*TriangleArea(a, b, c)+1e-15 {
			t.Fatalf("whole %.17g, parts %.17g", whole, parts)
		}
	})
}

func TestTriangleEdgeCases(t *testing.T) {
	if got := SphericalTriangleIntegral(Point(0, 0), Point(1, 0), Point(2, 0), one, 8); got != 0 {
		t.Errorf("degenerate triangle: %v, want 0", got)
	}
	for _, n := range []int{0, -1} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("n=%d did not panic", n)
				}
			}()
			SphericalTriangleIntegral(r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}, one, n)
		}()
	}
}

// cubeFace returns the +z face of the cube projected on the sphere.
func cubeFace() []r3.Vec {
	return []r3.Vec{{X: 1, Y: 1, Z: 1}, {X: -1, Y: 1, Z: 1}, {X: -1, Y: -1, Z: 1}, {X: 1, Y: -1, Z: 1}}
}

func TestPolygonIntegral(t *testing.T) {
	face := cubeFace()
	reversed := []r3.Vec{face[3], face[2], face[1], face[0]}
	repeated := []r3.Vec{face[0], face[1], face[1], face[2], face[3], face[3]}
	// A non-convex dart, star-shaped about its vertex mean, and its two
	// triangles (counterclockwise: top, lower left, notch, lower right).
	dart := []r3.Vec{Point(0, 0.3), Point(-0.3, -0.2), Point(0, -0.05), Point(0.3, -0.2)}
	dartWant := SphericalTriangleIntegral(dart[0], dart[1], dart[2], Smooth, 20) +
		SphericalTriangleIntegral(dart[0], dart[2], dart[3], Smooth, 20)
	// A regular hexagon about a point near the date line.
	var hex []r3.Vec
	c := Point(3.1, 0.5)
	for k := 0; k < 6; k++ {
		s, co := math.Sincos(float64(k) * math.Pi / 3)
		hex = append(hex, step(c, r3.Add(r3.Scale(co, East(c)), r3.Scale(s, North(c))), 0.2))
	}
	var hexWant float64
	for k := range hex {
		hexWant += SphericalTriangleIntegral(hex[0], hex[k], hex[(k+1)%6], Smooth, 20)
	}
	cases := []struct {
		name  string
		verts []r3.Vec
		f     Field
		want  float64
		tol   float64 // relative
		src   string
	}{
		// One cube panel is 4π/6 (REFERENCES.md [D]).
		{"cube face area", face, one, 4 * math.Pi / 6, 1e-14, "REFERENCES.md [D]"},
		{"reversed", reversed, one, 4 * math.Pi / 6, 1e-14, "REFERENCES.md [D]"},
		{"repeated vertices", repeated, one, 4 * math.Pi / 6, 1e-14, "REFERENCES.md [D]"},
		// By symmetry each face carries 1/6 of ∫z² + ... : ∫(x²+y²+z²) = 4π
		// over the sphere, so each face carries 4π/6 (common analytic fact).
		{"cube face |p|²", face, func(p r3.Vec) float64 { return r3.Dot(p, p) }, 4 * math.Pi / 6, 1e-14, "common analytic fact"},
		{"dart", dart, Smooth, dartWant, 1e-14, "sum of its triangles"},
		{"hexagon", hex, Smooth, hexWant, 1e-14, "fan from a vertex"},
	}
	for _, tc := range cases {
		got := PolygonIntegral(tc.verts, tc.f, 20)
		if math.Abs(got-tc.want) > tc.tol*math.Abs(tc.want) {
			t.Errorf("%s: %.17g, want %.17g (%s)", tc.name, got, tc.want, tc.src)
		}
	}
	// ∫Smooth over the 6 cube faces = 8π (mean 2).
	var total float64
	for _, perm := range [][3]int{{0, 1, 2}, {1, 2, 0}, {2, 0, 1}} {
		for _, sign := range []float64{1, -1} {
			var verts []r3.Vec
			for _, v := range face {
				w := [3]float64{v.X, v.Y, sign * v.Z}
				verts = append(verts, r3.Vec{X: w[perm[0]], Y: w[perm[1]], Z: w[perm[2]]})
			}
			total += PolygonIntegral(verts, Smooth, 24)
		}
	}
	if math.Abs(total-8*math.Pi) > 1e-14*8*math.Pi {
		t.Errorf("∫Smooth over the cube faces = %.17g, want 8π", total)
	}
	if got := PolygonIntegral([]r3.Vec{{X: 1}, {Y: 1}, {X: -1}, {Y: -1}}, one, 4); !math.IsNaN(got) {
		t.Errorf("polygon around a great circle: %v, want NaN", got)
	}
	defer func() {
		if recover() == nil {
			t.Errorf("two vertices did not panic")
		}
	}()
	PolygonIntegral([]r3.Vec{{X: 1}, {Y: 1}}, one, 4)
}
