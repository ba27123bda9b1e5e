package analytic

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// Constants of the Williamson et al. (1992) shallow-water test suite.
const (
	// EarthRadius is a, the sphere radius of the test suite, in m. It is
	// also colbridge's default mesh radius.
	EarthRadius = 6.37122e6
	// EarthOmega is Ω, the rotation rate, in s⁻¹.
	EarthOmega = 7.292e-5
	// Gravity is g of the test suite in m s⁻² (the 1976 standard
	// atmosphere uses StdG0 = 9.80665 instead).
	Gravity = 9.80616
	// Day is the length of a day in s used to express rates and periods.
	Day = 86400.0
	// TC2U0 is u₀ = 2πa/(12 days) in m s⁻¹, the speed of test case 2.
	TC2U0 = 2 * math.Pi * EarthRadius / (12 * Day)
	// TC2GH0 is gh₀ in m² s⁻², the geopotential scale of test case 2.
	TC2GH0 = 2.94e4
)

// TC2 is test case 2 of Williamson, Drake, Hack, Jakob & Swarztrauber
// (1992), "A standard test set for numerical approximations to the
// shallow water equations in spherical geometry", J. Comput. Phys.
// 102:211–224: global steady-state nonlinear zonal geostrophic flow,
// whose rotation axis is tilted by Alpha (radians) from the z axis
// towards λ = π. Standard tilts are 0, 0.05, π/2 − 0.05 and π/2 (from
// memory).
//
// With latitude θ, longitude λ, a = EarthRadius, u₀ = TC2U0:
//
//	u  = u₀ (cos θ cos α + cos λ sin θ sin α)
//	v  = −u₀ sin λ sin α
//	gh = gh₀ − (aΩu₀ + u₀²/2) μ²,   μ = −cos λ cos θ sin α + sin θ cos α.
//
// μ = k·p is the coordinate of p along the tilted axis
// k = (−sin α, 0, cos α), so the flow is solid-body rotation about k:
// the 3-D velocity is u₀ k × p. With the Coriolis parameter of the same
// tilted frame, f = 2Ω μ (Williamson et al. specify this rotated f for
// α ≠ 0; from memory, and it is what makes the state steady, see below),
// the state is an exact steady solution of the nonlinear shallow-water
// equations:
//
//	(f + ζ) k̂×u + ∇(gh + |u|²/2) = 0,   ∇·u = 0,
//
// with relative vorticity ζ = 2u₀μ/a. Pure geostrophic balance
// f k̂×u = −g∇h does not hold exactly: f k̂×u + g∇h = −(u₀²/a) μ (k − μp̂),
// the curvature (cyclostrophic) part, which is u₀/(2aΩ) ≈ 4.2% of f k̂×u.
//
// The zero value is the untilted case α = 0. Methods accept any nonzero
// r3.Vec and use its direction.
type TC2 struct {
	// Alpha is the tilt α of the rotation axis in radians.
	Alpha float64
}

// Axis returns the unit rotation axis k = (−sin α, 0, cos α).
func (c TC2) Axis() r3.Vec {
	s, co := math.Sincos(c.Alpha)
	return r3.Vec{X: -s, Y: 0, Z: co}
}

// mu returns μ = k·p̂.
func (c TC2) mu(p r3.Vec) float64 { return r3.Dot(c.Axis(), unit(p)) }

// Wind returns the eastward and northward wind components (m s⁻¹) at p
// from the published formulas in (λ, θ). At the poles λ = 0 is used,
// matching the basis of East and North.
func (c TC2) Wind(p r3.Vec) (u, v float64) {
	lon, lat := LonLat(p)
	sa, ca := math.Sincos(c.Alpha)
	sl, cl := math.Sincos(lon)
	st, ct := math.Sincos(lat)
	return TC2U0 * (ct*ca + cl*st*sa), -TC2U0 * sl * sa
}

// Velocity returns the 3-D Cartesian velocity u₀ k × p̂ in m s⁻¹. It is
// tangent to the sphere and equals u·East(p) + v·North(p) with (u, v)
// from Wind, to rounding (checked in the tests).
func (c TC2) Velocity(p r3.Vec) r3.Vec {
	return r3.Scale(TC2U0, r3.Cross(c.Axis(), unit(p)))
}

// Height returns the fluid depth h = (gh₀ − (aΩu₀ + u₀²/2) μ²)/g in m.
// For α = 0 it is 2998.115 m on the equator and 1092.833 m at the poles.
func (c TC2) Height(p r3.Vec) float64 {
	m := c.mu(p)
	return (TC2GH0 - (EarthRadius*EarthOmega*TC2U0+TC2U0*TC2U0/2)*m*m) / Gravity
}

// Coriolis returns the Coriolis parameter of the tilted frame,
// f = 2Ω μ = 2Ω(−cos λ cos θ sin α + sin θ cos α), in s⁻¹ (from memory;
// see TC2).
func (c TC2) Coriolis(p r3.Vec) float64 { return 2 * EarthOmega * c.mu(p) }

// Vorticity returns the relative vorticity ζ = k̂·∇×u = 2u₀μ/a in s⁻¹
// (∇²ψ of the stream function; derived).
func (c TC2) Vorticity(p r3.Vec) float64 { return 2 * TC2U0 * c.mu(p) / EarthRadius }

// StreamFunction returns ψ = −a u₀ μ in m² s⁻¹, with the convention
//
//	u = k̂ × ∇ψ   (k̂ the outward unit normal; u = −∂ψ/∂y, v = ∂ψ/∂x),
//
// so for α = 0, ψ = −a u₀ sin θ. (Derived: ∇μ = (k − μp̂)/a on the
// sphere of radius a, and p̂ × (k − μp̂) = −k × p̂.)
func (c TC2) StreamFunction(p r3.Vec) float64 { return -EarthRadius * TC2U0 * c.mu(p) }

// EdgeFlux returns the exact volume flux per unit depth, ∫ u·n ds in
// m² s⁻¹, across the shorter great-circle arc from a to b on the sphere
// of radius a = EarthRadius, with n the unit normal pointing to the right
// of the direction a→b as seen from outside the sphere (n = t × p̂ for
// the unit tangent t).
//
// For a non-divergent flow u = k̂ × ∇ψ, u·(t × p̂) = −∂ψ/∂s, so the flux is
// ψ(a) − ψ(b), whatever the path between a and b. Its error is that of
// two evaluations of ψ: about 1e-16·a·u₀ ≈ 3e-8 m² s⁻¹. Fluxes around a
// closed curve therefore sum to zero up to that rounding. The tests
// compare it with 24-point Gauss–Legendre quadrature of u·n along the arc.
func (c TC2) EdgeFlux(a, b r3.Vec) float64 {
	return c.StreamFunction(a) - c.StreamFunction(b)
}
