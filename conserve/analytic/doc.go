// Package analytic holds published analytic fields and reference profiles
// that the tests of the other colbridge packages, the audit's accuracy
// checks and the demo compare against.
//
// Nothing here depends on a mesh: every function takes points on the unit
// sphere (r3.Vec of length one; inputs that are not unit length are
// normalised where a direction is all that matters) or plain heights and
// pressures. The contents, one concept per file:
//
//   - sphere.go: longitude/latitude conversion and the local east/north
//     basis with its pole convention.
//   - williamson2.go: Williamson et al. (1992) shallow-water test case 2,
//     steady balanced flow with tilt α: wind, 3-D velocity, height,
//     stream function, exact edge fluxes.
//   - fields.go, vortex.go: scalar test fields for remapping (smooth and
//     oscillatory harmonics, the Nair & Jablonowski 2008 vortex) and a
//     registry by name.
//   - gauss.go, triangle.go, latlon.go: exact cell integrals by high-order
//     Gauss–Legendre quadrature over geodesic triangles, convex geodesic
//     polygons and latitude–longitude cells.
//   - stdatm1976.go: the 1976 U.S. Standard Atmosphere up to 86 km.
//   - heldsuarez.go: Held & Suarez (1994) thermal relaxation and Rayleigh
//     drag.
//
// Conventions: longitude λ and latitude φ in radians; a point is
// (cosφ cosλ, cosφ sinλ, sinφ). Integrals are over the unit sphere
// (multiply by R² for a sphere of radius R). Values that come from memory
// rather than a checked copy of the source are marked "from memory" in
// the doc comment that uses them and in the test that checks them.
package analytic
