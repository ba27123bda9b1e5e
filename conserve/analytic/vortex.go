package analytic

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// Vortex is the deformational vortex field of Nair & Jablonowski (2008),
// "Moving vortices on the sphere: a test case for horizontal advection
// problems", Mon. Wea. Rev. 136:699–711, in its stationary form (the
// vortex centre does not travel; there is no background rotation):
//
//	h(λ′, φ′, t) = 1 − tanh[(ρ/γ) sin(λ′ − ω(ρ) t)],
//	ρ = ρ₀ cos φ′,
//	ω(ρ) = V(ρ)/(aρ),  V(ρ) = u₀ (3√3/2) sech²ρ tanh ρ,  u₀ = 2πa/(12 days),
//
// with ρ₀ = 3 and γ = 5 (parameters and V from memory; REFERENCES.md
// marks them [M]). ωt does not depend on a. At ρ = 0 the limit
// ω = (3√3/2)u₀/a is used; h is 1 there whatever ω is.
//
// (λ′, φ′) are coordinates rotated so that the vortex centre C (at
// longitude CenterLon, latitude CenterLat) is their north pole:
//
//	sin φ′ = p·C,  λ′ = atan2(p·E_C, −p·N_C),
//
// with E_C = East(C) and N_C = North(C), i.e. λ′ = 0 on the great circle
// from C through the meridian of C towards the equator. In (λ, φ) this is
// the usual form λ′ = atan2(cos φ sin(λ−λc), cos φ sin φc cos(λ−λc) −
// cos φc sin φ), sin φ′ = sin φ sin φc + cos φ cos φc cos(λ−λc).
// The vortex at C turns anticlockwise seen from outside; a second one,
// its mirror, sits at −C.
//
// For every t the mean of h over the sphere is exactly 1 (h − 1 is odd in
// λ′ − ωt on each rotated parallel) and 0 < h < 2.
type Vortex struct {
	// CenterLon, CenterLat locate the vortex centre (the rotated pole), in
	// radians.
	CenterLon, CenterLat float64
	// Time is t in seconds.
	Time float64
}

// RegistryVortex is the vortex of the field registry: centre at
// (λ, φ) = (π − 0.8, π/4.8), away from the poles and from grid lines of
// common meshes, at t = 3 days, when the spiral has wound about 8 radians
// at its centre. These choices are colbridge's, for remapping tests; they
// are not prescribed by Nair & Jablonowski.
var RegistryVortex = Vortex{CenterLon: math.Pi - 0.8, CenterLat: math.Pi / 4.8, Time: 3 * Day}

// vortexRho0 and vortexGamma are ρ₀ and γ of Nair & Jablonowski (2008),
// from memory.
const (
	vortexRho0  = 3.0
	vortexGamma = 5.0
)

// Rotated returns the rotated coordinates (λ′, φ′) of p in radians.
func (v Vortex) Rotated(p r3.Vec) (lonr, latr float64) {
	c := Point(v.CenterLon, v.CenterLat)
	e, n := r3.Dot(p, East(c)), -r3.Dot(p, North(c))
	return math.Atan2(e, n), math.Atan2(r3.Dot(p, c), math.Hypot(e, n))
}

// AngularVelocity returns ω(ρ) in s⁻¹.
func (v Vortex) AngularVelocity(rho float64) float64 {
	const u0a = 2 * math.Pi / (12 * Day) // u₀/a
	ratio := 1.0                         // tanh(ρ)/ρ → 1 as ρ → 0
	if rho != 0 {
		ratio = math.Tanh(rho) / rho
	}
	sech := 1 / math.Cosh(rho)
	return u0a * 1.5 * math.Sqrt(3) * sech * sech * ratio
}

// Eval returns h at p.
func (v Vortex) Eval(p r3.Vec) float64 {
	lonr, latr := v.Rotated(p)
	rho := vortexRho0 * math.Cos(latr)
	return 1 - math.Tanh(rho/vortexGamma*math.Sin(lonr-v.AngularVelocity(rho)*v.Time))
}
