package sphere

import (
	"gonum.org/v1/gonum/integrate/quad"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// Tolerances. Each says why it is what it is.
const (
	// ulpTol: a handful of roundings of O(1) quantities.
	ulpTol = 1e-15
	// tinyRelTol: the difference form keeps full relative precision on tiny triangles;
	// a few ulps of the area itself.
	tinyRelTol = 1e-14
	// momentAbsTol: first moments are accurate to a few ulps of O(1) quantities.
	momentAbsTol = 1e-15
)

// TestOctant: the octant triangle (1,0,0), (0,1,0), (0,0,1) has area π/2 (REFERENCES.md,
// Van Oosterom & Strackee 1983) and, by symmetry, first moment (π/4, π/4, π/4): the
// integral of |z| over the unit sphere is 2π, an eighth of which each octant holds
// (analytic).
func TestOctant(t *testing.T) {
	a, b, c := r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}
	if got := TriangleArea(a, b, c); math.Abs(got-math.Pi/2) > ulpTol {
		t.Errorf("octant area %.17g, want π/2", got)
	}
	if got := TriangleArea(a, c, b); math.Abs(got+math.Pi/2) > ulpTol {
		t.Errorf("clockwise octant area %.17g, want −π/2", got)
	}
	mom := r3.Add(r3.Add(GreatArcMoment(a, b), GreatArcMoment(b, c)), GreatArcMoment(c, a))
	for _, x := range []float64{mom.X, mom.Y, mom.Z} {
		if math.Abs(x-math.Pi/4) > ulpTol {
			t.Errorf("octant first moment %v, want π/4 each", mom)
		}
	}
}

// lhuilier is L'Huilier's theorem (Todhunter, Spherical Trigonometry): an independent
// formula for the (unsigned) area of a spherical triangle.
func lhuilier(a, b, c r3.Vec) float64 {
	x, y, z := ArcAngle(b, c), ArcAngle(c, a), ArcAngle(a, b)
	s := (x + y + z) / 2
	tt := math.Tan(s/2) * math.Tan((s-x)/2) * math.Tan((s-y)/2) * math.Tan((s-z)/2)
	return 4 * math.Atan(math.Sqrt(math.Max(tt, 0)))
}

// TestTriangleAgainstLHuilier: the two published formulas agree to ~1e-14 on random
// triangles of moderate size (REFERENCES.md: L'Huilier agrees to ~1e-14 [C][D]).
func TestTriangleAgainstLHuilier(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 2000; i++ {
		c := randUnit(rng)
		h := math.Pow(10, -3*rng.Float64()) // angular size 1e-3 .. 1 rad
		a, b, d := jitter(rng, c, h), jitter(rng, c, h), jitter(rng, c, h)
		got := math.Abs(TriangleArea(a, b, d))
		want := lhuilier(a, b, d)
		// L'Huilier loses precision on thin triangles; compare where it is well conditioned.
		if want < 1e-3*h*h {
			continue
		}
		if rel := math.Abs(got-want) / want; rel > 1e-10 {
			t.Fatalf("triangle %v %v %v: area %.17g, L'Huilier %.17g (rel %.2g)", a, b, d, got, want, rel)
		}
	}
}

// TestTinyTriangles: for triangles down to 1e-6 rad (6 m on Earth) the area keeps full
// relative precision. The reference is the same formula in 200-bit arithmetic; for such
// small E, atan2(y, x) = y/x·(1 − (y/x)²/3) to far below an ulp.
func TestTinyTriangles(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for i := 0; i < 500; i++ {
		c := randUnit(rng)
		h := math.Pow(10, -2-4*rng.Float64())
		a, b, d := jitter(rng, c, h), jitter(rng, c, h), jitter(rng, c, h)
		got := TriangleArea(a, b, d)
		want := bigArea(a, b, d)
		if math.Abs(want) < 0.05*h*h { // skip slivers: their area is not the point here
			continue
		}
		if rel := math.Abs(got-want) / math.Abs(want); rel > tinyRelTol {
			t.Fatalf("h=%g: area %.17g, reference %.17g (rel %.2g)", h, got, want, rel)
		}
	}
}

func bigArea(a, b, c r3.Vec) float64 {
	const prec = 200
	f := func(x float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(x) }
	mul := func(x, y *big.Float) *big.Float { return new(big.Float).SetPrec(prec).Mul(x, y) }
	add := func(x, y *big.Float) *big.Float { return new(big.Float).SetPrec(prec).Add(x, y) }
	sub := func(x, y *big.Float) *big.Float { return new(big.Float).SetPrec(prec).Sub(x, y) }
	ax, ay, az := f(a.X), f(a.Y), f(a.Z)
	bx, by, bz := f(b.X), f(b.Y), f(b.Z)
	cx, cy, cz := f(c.X), f(c.Y), f(c.Z)
	// det = a·(b×c)
	det := add(add(mul(ax, sub(mul(by, cz), mul(bz, cy))), mul(ay, sub(mul(bz, cx), mul(bx, cz)))), mul(az, sub(mul(bx, cy), mul(by, cx))))
	dot := func(x1, y1, z1, x2, y2, z2 *big.Float) *big.Float {
		return add(add(mul(x1, x2), mul(y1, y2)), mul(z1, z2))
	}
	den := add(add(add(f(1), dot(ax, ay, az, bx, by, bz)), dot(bx, by, bz, cx, cy, cz)), dot(cx, cy, cz, ax, ay, az))
	q, _ := new(big.Float).SetPrec(prec).Quo(det, den).Float64()
	return 2 * (q - q*q*q/3)
}

// TestLatLonCellExact: a cell bounded by two meridians and two parallels has area
// Δλ(sin φ₂ − sin φ₁) (REFERENCES.md, exact lat–lon cell) and first moment
// ((sin λ₂ − sin λ₁)I, (cos λ₁ − cos λ₂)I, Δλ(sin²φ₂ − sin²φ₁)/2) with
// I = ∫cos²φ dφ = [φ/2 + sin 2φ/4] (calculus).
func TestLatLonCellExact(t *testing.T) {
	cases := []struct{ lon1, lon2, lat1, lat2 float64 }{
		{0, 1, 0, 1}, {179.5, 180.5, -60, -59}, {-10, 10, 30, 70}, {20, 21, 89, 89.999},
		{-3, 4, -88, -20}, {100, 100.25, 45, 45.25}, {-179.9, 179.9 - 360 + 0.5, -1, 1},
	}
	for _, tc := range cases {
		d := math.Pi / 180
		l1, l2, p1, p2 := tc.lon1*d, tc.lon2*d, tc.lat1*d, tc.lat2*d
		sw, se, ne, nw := FromLonLat(l1, p1), FromLonLat(l2, p1), FromLonLat(l2, p2), FromLonLat(l1, p2)
		area := PolygonArea([]r3.Vec{sw, se, ne, nw})
		var mom r3.Vec
		for _, e := range [][2]r3.Vec{{sw, se}, {ne, nw}} {
			m, dd := ParallelCircle(e[0], e[1])
			area += SegmentArea(e[0], e[1], m, dd)
			mom = r3.Add(mom, ArcMoment(e[0], e[1], m, dd))
		}
		mom = r3.Add(mom, GreatArcMoment(se, ne))
		mom = r3.Add(mom, GreatArcMoment(nw, sw))
		want := (l2 - l1) * (math.Sin(p2) - math.Sin(p1))
		if rel := math.Abs(area-want) / want; rel > 1e-12 {
			t.Errorf("%v: area %.17g, exact %.17g (rel %.2g)", tc, area, want, rel)
		}
		I := (p2-p1)/2 + (math.Sin(2*p2)-math.Sin(2*p1))/4
		wm := r3.Vec{X: (math.Sin(l2) - math.Sin(l1)) * I, Y: (math.Cos(l1) - math.Cos(l2)) * I,
			Z: (l2 - l1) * (math.Sin(p2)*math.Sin(p2) - math.Sin(p1)*math.Sin(p1)) / 2}
		// The moment is a sum of O(h) arc terms that cancel to O(h²); vertices rounded to
		// float64 are off the unit sphere by ~1e-16, which shifts each arc term by that
		// much, so the bound is absolute: a few ulps of O(1) (relative error ~ε/h²).
		if err := r3.Norm(r3.Sub(mom, wm)); err > momentAbsTol {
			t.Errorf("%v: moment %v, exact %v (err %.2g)", tc, mom, wm, err/r3.Norm(wm))
		}
	}
}

// TestSmallCircleGeneral: for a small circle about an arbitrary axis the segment area and
// moment agree with brute-force quadrature of the region between arc and chord (Gauss–
// Legendre on the sector, common practice).
func TestSmallCircleGeneral(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for i := 0; i < 50; i++ {
		m := randUnit(rng)
		d := 2*rng.Float64() - 1
		d *= 0.95
		e1 := Normalize(r3.Cross(m, randUnit(rng)))
		e2 := r3.Cross(m, e1)
		rho := math.Sqrt(1 - d*d)
		theta := (0.05 + rng.Float64()) * 2 // up to ~2.1 rad, < π
		pt := func(t float64) r3.Vec {
			s, c := math.Sincos(t)
			return r3.Add(r3.Scale(d, m), r3.Scale(rho, r3.Add(r3.Scale(c, e1), r3.Scale(s, e2))))
		}
		a, b := pt(0), pt(theta)
		// Region bounded by the arc a→b and the great arcs b→P→a, P = m: sector of the cap.
		// Its area is θ(1−d) and its moment by quadrature over the cap sector in polar form.
		seg := SegmentArea(a, b, m, d)
		want := theta*(1-d) - TriangleArea(a, b, m)
		if math.Abs(seg-want) > 1e-14 {
			t.Fatalf("segment area %.17g vs %.17g", seg, want)
		}
		if span := CircleSpan(a, b, m, d); math.Abs(span-theta) > 1e-13 {
			t.Fatalf("span %.17g, want %.17g", span, theta)
		}
		// Moment of the cap sector: ∫ over polar angle ψ ∈ [0, acos d], azimuth [0, θ].
		var quad r3.Vec
		xs, ws := gauss(40)
		psiMax := math.Acos(d)
		for i, u := range xs {
			psi := psiMax * (u + 1) / 2
			for j, v := range xs {
				az := theta * (v + 1) / 2
				sp, cp := math.Sincos(psi)
				sa, ca := math.Sincos(az)
				p := r3.Add(r3.Scale(cp, m), r3.Scale(sp, r3.Add(r3.Scale(ca, e1), r3.Scale(sa, e2))))
				w := ws[i] * ws[j] * psiMax / 2 * theta / 2 * sp
				quad = r3.Add(quad, r3.Scale(w, p))
			}
		}
		// Boundary of the sector: arc a→b, great b→m, great m→a.
		mom := r3.Add(ArcMoment(a, b, m, d), r3.Add(GreatArcMoment(b, m), GreatArcMoment(m, a)))
		if err := r3.Norm(r3.Sub(mom, quad)); err > 1e-12 {
			t.Fatalf("sector moment %v, quadrature %v (err %.2g)", mom, quad, err)
		}
	}
}

// gauss returns n-point Gauss–Legendre nodes and weights on [−1, 1] (gonum's quad).
func gauss(n int) ([]float64, []float64) {
	x, w := make([]float64, n), make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	return x, w
}

func randUnit(rng *rand.Rand) r3.Vec {
	for {
		p := r3.Vec{X: 2*rng.Float64() - 1, Y: 2*rng.Float64() - 1, Z: 2*rng.Float64() - 1}
		if n := r3.Norm(p); n > 0.1 && n < 1 {
			return r3.Scale(1/n, p)
		}
	}
}

func jitter(rng *rand.Rand, c r3.Vec, h float64) r3.Vec {
	return Normalize(r3.Add(c, r3.Scale(h, r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()})))
}
