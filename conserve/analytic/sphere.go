package analytic

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// Point returns the unit vector at longitude lon and latitude lat
// (radians): (cos lat cos lon, cos lat sin lon, sin lat).
func Point(lon, lat float64) r3.Vec {
	sl, cl := math.Sincos(lon)
	sp, cp := math.Sincos(lat)
	return r3.Vec{X: cp * cl, Y: cp * sl, Z: sp}
}

// LonLat returns the longitude in (−π, π] and the latitude in [−π/2, π/2]
// of the direction p, in radians. p need not be unit length. Both angles
// come from atan2, so they are accurate to a few ulps everywhere,
// including near the poles where asin(z) loses half the digits. At the
// poles (x = y = 0) the longitude is 0; the zero vector gives (0, 0).
func LonLat(p r3.Vec) (lon, lat float64) {
	return math.Atan2(p.Y, p.X), math.Atan2(p.Z, math.Hypot(p.X, p.Y))
}

// East returns the local unit eastward vector at the direction p,
// ẑ×p/|ẑ×p| = (−sin λ, cos λ, 0).
//
// Pole convention: where p lies on the z axis (x = y = 0) the eastward
// direction is undefined; East then returns (0, 1, 0), the limit taken
// along the meridian λ = 0. This agrees with LonLat, which reports λ = 0
// at the poles, so formulas written in (λ, φ) and their 3-D forms give
// the same components there.
func East(p r3.Vec) r3.Vec {
	h := math.Hypot(p.X, p.Y)
	if h == 0 {
		return r3.Vec{X: 0, Y: 1, Z: 0}
	}
	return r3.Vec{X: -p.Y / h, Y: p.X / h, Z: 0}
}

// North returns the local unit northward vector at the direction p,
// p̂ × East(p) = (−sin φ cos λ, −sin φ sin λ, cos φ).
//
// Pole convention: as for East, the limit along the meridian λ = 0, so
// North is (−1, 0, 0) at the north pole and (1, 0, 0) at the south pole.
// East(p), North(p), p̂ form a right-handed orthonormal basis everywhere.
func North(p r3.Vec) r3.Vec {
	n := r3.Norm(p)
	if n == 0 {
		return r3.Vec{X: 0, Y: 0, Z: 1}
	}
	return r3.Cross(r3.Scale(1/n, p), East(p))
}

// unit returns p/|p| (the zero vector stays zero).
func unit(p r3.Vec) r3.Vec {
	n := r3.Norm(p)
	if n == 0 {
		return p
	}
	return r3.Scale(1/n, p)
}
