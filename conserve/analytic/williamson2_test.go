package analytic

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"
)

// standardTilts are the tilts of Williamson et al. (1992) test case 2
// (from memory) plus one generic angle.
var standardTilts = []float64{0, 0.05, math.Pi/2 - 0.05, math.Pi / 2, 1}

func TestTC2CheckValues(t *testing.T) {
	cases := []struct {
		name   string
		got    float64
		want   float64
		tol    float64
		source string
	}{
		// REFERENCES.md [D]: u₀ = 2πa/(12 days) to 16 digits; tol 2 ulps.
		{"u0", TC2U0, 38.61068276698372, 1e-14, "Williamson et al. 1992; REFERENCES.md [D]"},
		// Quoted to 3 decimals: tol is half a unit in the last digit.
		{"h(north pole)", TC2{}.Height(r3.Vec{Z: 1}), 1092.833, 5e-4, "Williamson et al. 1992; REFERENCES.md [C][D]"},
		{"h(south pole)", TC2{}.Height(r3.Vec{Z: -1}), 1092.833, 5e-4, "Williamson et al. 1992; REFERENCES.md [C][D]"},
		{"h(equator)", TC2{}.Height(Point(2, 0)), 2998.115, 5e-4, "Williamson et al. 1992; REFERENCES.md [C][D]"},
		// The tilted flow is the untilted one rotated: h on the tilted axis is
		// the polar value (derived from the published formula).
		{"h(axis, α=π/2−0.05)", TC2{Alpha: math.Pi/2 - 0.05}.Height(TC2{Alpha: math.Pi/2 - 0.05}.Axis()), 1092.833, 5e-4, "derived"},
		// α = 0: u = u₀ on the equator, v = 0 (published formula).
		{"u(equator)", first(TC2{}.Wind(Point(1, 0))), TC2U0, 1e-13, "Williamson et al. 1992"},
	}
	for _, c := range cases {
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("%s = %.9g, want %.9g ± %g (%s)", c.name, c.got, c.want, c.tol, c.source)
		}
	}
}

func first(a, _ float64) float64 { return a }

// tolVelocity: Wind and Velocity evaluate the same solid-body rotation by
// two routes (lon–lat trigonometry and a cross product), each good to a
// few ulps of u₀.
const tolVelocity = 1e-14 * TC2U0

func TestTC2WindMatchesVelocity(t *testing.T) {
	// The published (u, v) of Williamson et al. 1992 and the 3-D form
	// u₀ k × p must agree everywhere, poles included (pole convention of
	// East/North); the velocity is tangent to the sphere.
	for _, alpha := range standardTilts {
		c := TC2{Alpha: alpha}
		rapid.Check(t, func(t *rapid.T) {
			p := drawPoint(t, "p")
			u, v := c.Wind(p)
			want := r3.Add(r3.Scale(u, East(p)), r3.Scale(v, North(p)))
			got := c.Velocity(p)
			if d := r3.Norm(r3.Sub(got, want)); d > tolVelocity {
				t.Fatalf("α=%v p=%v: Velocity %v, Wind gives %v (|diff| %g)", alpha, p, got, want, d)
			}
			if d := math.Abs(r3.Dot(got, p)); d > tolVelocity {
				t.Fatalf("α=%v p=%v: velocity not tangent, v·p = %g", alpha, p, d)
			}
		})
	}
}

// Finite-difference settings for the balance checks. An angular step of
// 1e-4 rad gives a truncation error of about d²/6 ≈ 2e-9 relative for
// fields that vary on the scale of the sphere, and a rounding error of
// about 1e-16/d = 1e-12 relative.
const (
	fdStep = 1e-4
	// tolBalance: relative to the size of the terms, well above the
	// 2e-9 truncation error and well below what a wrong balance leaves:
	// dropping the curvature term leaves 4%, and the untilted Coriolis
	// parameter 2Ω sin φ leaves about 6e-5 even for α = 0.05.
	tolBalance = 1e-6
)

func TestTC2StreamFunction(t *testing.T) {
	// Derived: u = k̂ × ∇ψ (documented convention), by finite differences.
	for _, alpha := range standardTilts {
		c := TC2{Alpha: alpha}
		rapid.Check(t, func(t *rapid.T) {
			p := drawPoint(t, "p")
			grad := surfaceGradient(c.StreamFunction, p, EarthRadius, fdStep)
			got := r3.Cross(p, grad)
			if d := r3.Norm(r3.Sub(got, c.Velocity(p))); d > tolBalance*TC2U0 {
				t.Fatalf("α=%v p=%v: k×∇ψ = %v, velocity %v", alpha, p, got, c.Velocity(p))
			}
		})
	}
}

// circulationVorticity returns the relative vorticity at p as the
// circulation around a small circle divided by its area (Stokes), on the
// sphere of radius a. With r = 1e-4 rad the cap average of a degree-1
// harmonic differs from the centre value by r²/4 relative.
func circulationVorticity(vel func(r3.Vec) r3.Vec, p r3.Vec) float64 {
	const r = 1e-4
	var circ float64
	smallCircle(p, r, 64, func(q, tang, _ r3.Vec, ds float64) {
		circ += r3.Dot(vel(q), tang) * ds * EarthRadius
	})
	return circ / (2 * math.Pi * (1 - math.Cos(r)) * EarthRadius * EarthRadius)
}

func TestTC2SteadyBalance(t *testing.T) {
	// Williamson et al. 1992: test case 2 is a steady solution of the
	// nonlinear shallow-water equations. In vector-invariant form the
	// momentum equation is (f + ζ) k̂×u + ∇(gh + |u|²/2) = 0 with the
	// tilted f = 2Ωμ (from memory). Checked at random points with
	// vorticity from circulation and gradients from finite differences.
	scale := 2 * EarthOmega * TC2U0 // size of f k̂×u
	for _, alpha := range standardTilts {
		c := TC2{Alpha: alpha}
		bernoulli := func(p r3.Vec) float64 {
			v := c.Velocity(p)
			return Gravity*c.Height(p) + r3.Dot(v, v)/2
		}
		rapid.Check(t, func(t *rapid.T) {
			p := drawPoint(t, "p")
			zeta := circulationVorticity(c.Velocity, p)
			if d := math.Abs(zeta - c.Vorticity(p)); d > tolBalance*2*TC2U0/EarthRadius {
				t.Fatalf("α=%v p=%v: vorticity %g by circulation, %g by formula", alpha, p, zeta, c.Vorticity(p))
			}
			kxu := r3.Cross(p, c.Velocity(p))
			res := r3.Add(r3.Scale(c.Coriolis(p)+zeta, kxu), surfaceGradient(bernoulli, p, EarthRadius, fdStep))
			if r3.Norm(res) > tolBalance*scale {
				t.Fatalf("α=%v p=%v: momentum residual %v (scale %g)", alpha, p, res, scale)
			}
			// Pure geostrophic balance leaves exactly the curvature term
			// −(u₀²/a) μ (k − μp) (documented; about 4% of f k̂×u).
			mu := r3.Dot(c.Axis(), p)
			geo := r3.Add(r3.Scale(c.Coriolis(p), kxu), surfaceGradient(func(q r3.Vec) float64 { return Gravity * c.Height(q) }, p, EarthRadius, fdStep))
			want := r3.Scale(-TC2U0*TC2U0/EarthRadius*mu, r3.Sub(c.Axis(), r3.Scale(mu, p)))
			if r3.Norm(r3.Sub(geo, want)) > tolBalance*scale {
				t.Fatalf("α=%v p=%v: geostrophic residual %v, want %v", alpha, p, geo, want)
			}
		})
	}
}

func TestTC2NonDivergent(t *testing.T) {
	// Solid-body rotation is non-divergent: the outward flux through a small
	// circle vanishes (derived; Williamson et al. 1992 call the flow
	// non-divergent). Relative to |u|·circumference.
	for _, alpha := range standardTilts {
		c := TC2{Alpha: alpha}
		rapid.Check(t, func(t *rapid.T) {
			p := drawPoint(t, "p")
			var flux, size float64
			smallCircle(p, 1e-3, 64, func(q, _, nu r3.Vec, ds float64) {
				v := c.Velocity(q)
				flux += r3.Dot(v, nu) * ds
				size += r3.Norm(v) * ds
			})
			if math.Abs(flux) > 1e-13*math.Max(size, TC2U0*1e-3) {
				t.Fatalf("α=%v p=%v: net outward flux %g (size %g)", alpha, p, flux, size)
			}
		})
	}
}

// arcFluxQuadrature integrates u·n along the shorter arc a→b on the sphere
// of radius EarthRadius with an m-point Gauss–Legendre rule in the arc
// angle, n = t × p pointing right of the direction of travel.
func arcFluxQuadrature(vel func(r3.Vec) r3.Vec, a, b r3.Vec, m int) float64 {
	a, b = unit(a), unit(b)
	theta := math.Atan2(r3.Norm(r3.Cross(a, b)), r3.Dot(a, b))
	if theta == 0 {
		return 0
	}
	dir := unit(r3.Sub(b, r3.Scale(r3.Dot(a, b), a))) // unit tangent at a
	x, w := gaussLegendre(m)
	var sum float64
	for i := range x {
		s := theta * (x[i] + 1) / 2
		p := step(a, dir, s)
		tang := step(dir, r3.Scale(-1, a), s) // d p / d s
		sum += w[i] * r3.Dot(vel(p), r3.Cross(tang, p))
	}
	return sum * theta / 2 * EarthRadius
}

// tolFlux: the flux through an arc of angle θ is at most u₀aθ; 24-point
// quadrature of a trigonometric integrand on θ ≤ π is exact to rounding,
// and ψ(a) − ψ(b) carries about 1e-16·a·u₀ absolute rounding.
func tolFlux(theta float64) float64 {
	return 1e-13*TC2U0*EarthRadius*theta + 1e-15*TC2U0*EarthRadius
}

func TestTC2EdgeFlux(t *testing.T) {
	// Derived: for u = k̂×∇ψ the flux through a curve is ψ(start) − ψ(end),
	// checked against direct quadrature of u·n along the arc.
	cases := []struct {
		name string
		a, b r3.Vec
	}{
		{"equator eastward", Point(0, 0), Point(0.3, 0)},
		{"meridian through the pole", Point(1, 1.2), Point(1+math.Pi, 1.3)},
		{"across the date line", Point(3.1, -0.4), Point(-3.0, -0.2)},
		{"long arc", Point(0, -1.4), Point(2.8, 1.3)},
		{"tiny arc", Point(0.5, 0.5), Point(0.5+1e-7, 0.5+1e-7)},
		{"pole to equator", r3.Vec{Z: 1}, Point(0.7, 0)},
	}
	for _, alpha := range standardTilts {
		c := TC2{Alpha: alpha}
		for _, tc := range cases {
			got := c.EdgeFlux(tc.a, tc.b)
			want := arcFluxQuadrature(c.Velocity, tc.a, tc.b, 24)
			theta := math.Acos(math.Min(1, r3.Dot(unit(tc.a), unit(tc.b))))
			if math.Abs(got-want) > tolFlux(theta) {
				t.Errorf("α=%v %s: EdgeFlux %.12g, quadrature %.12g", alpha, tc.name, got, want)
			}
			if got+c.EdgeFlux(tc.b, tc.a) != 0 {
				t.Errorf("α=%v %s: flux does not change sign with direction", alpha, tc.name)
			}
		}
		rapid.Check(t, func(t *rapid.T) {
			a, b := drawPoint(t, "a"), drawPoint(t, "b")
			if r3.Norm(r3.Add(a, b)) < 1e-3 {
				t.Skip("nearly antipodal: the shorter arc is ill defined")
			}
			theta := math.Atan2(r3.Norm(r3.Cross(a, b)), r3.Dot(a, b))
			got, want := c.EdgeFlux(a, b), arcFluxQuadrature(c.Velocity, a, b, 24)
			if math.Abs(got-want) > tolFlux(theta) {
				t.Fatalf("α=%v %v→%v: EdgeFlux %.12g, quadrature %.12g", alpha, a, b, got, want)
			}
		})
	}
}

func TestTC2ClosedCurveFlux(t *testing.T) {
	// Non-divergence (Williamson et al. 1992): the net flux out of a closed
	// geodesic polygon is zero. Checked by quadrature along each side, so
	// it does not rely on the stream function.
	c := TC2{Alpha: 0.05}
	rapid.Check(t, func(t *rapid.T) {
		centre := drawPoint(t, "centre")
		r := rapid.Float64Range(1e-3, 1).Draw(t, "radius")
		k := rapid.IntRange(3, 7).Draw(t, "sides")
		var verts []r3.Vec
		for i := 0; i < k; i++ {
			az := 2 * math.Pi * float64(i) / float64(k)
			sa, ca := math.Sincos(az)
			verts = append(verts, step(centre, r3.Add(r3.Scale(ca, East(centre)), r3.Scale(sa, North(centre))), r))
		}
		var net, size float64
		for i := range verts {
			f := arcFluxQuadrature(c.Velocity, verts[i], verts[(i+1)%k], 24)
			net += f
			size += math.Abs(f)
		}
		if math.Abs(net) > 1e-13*size+1e-15*TC2U0*EarthRadius {
			t.Fatalf("net flux %g (sum of |flux| %g)", net, size)
		}
	})
}
