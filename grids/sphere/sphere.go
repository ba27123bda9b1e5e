// Package sphere holds the exact primitives of geometry on the unit sphere that meshes and
// overlap computations share: signed triangle areas, arcs of great and small circles, their
// areas and first moments.
//
// Every region is bounded by arcs of circles {x : |x| = 1, m·x = d} with |m| = 1 and
// |d| < 1; d = 0 is a great circle. An arc from a to b is travelled counter-clockwise about
// m, so the region on its left (seen from outside the sphere) is the side m·x ≥ d. Arcs are
// shorter than π.
//
// Accuracy: the formulas work on vertex differences, so a triangle of angular size h has a
// relative area error of a few ulps rather than ulps/h (measured in the tests: ≤ 1e-14
// relative down to h = 1e-6 rad, against 1e-10 for the textbook form).
//
// References:
//   - Van Oosterom, A. & Strackee, J. (1983), The solid angle of a plane triangle, IEEE
//     Trans. Biomed. Eng. 30(2):125–126 (signed triangle area).
//   - The vector-area identity ∫_S n dA = ½ ∮ x × dx (Stokes; any vector-calculus text) for
//     first moments; on the unit sphere n = x.
package sphere

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// TriangleArea returns the signed area of the geodesic triangle abc on the unit sphere:
// positive when a, b, c run counter-clockwise seen from outside. The triangle must be
// smaller than a hemisphere. It evaluates
//
//	E = 2·atan2(a·((b−a)×(c−a)), 1 + a·b + b·c + c·a)
//
// which equals Van Oosterom & Strackee's form (a·(b×c) = a·((b−a)×(c−a))) but keeps full
// relative precision for tiny triangles.
func TriangleArea(a, b, c r3.Vec) float64 {
	det := r3.Dot(a, r3.Cross(r3.Sub(b, a), r3.Sub(c, a)))
	den := 1 + r3.Dot(a, b) + r3.Dot(b, c) + r3.Dot(c, a)
	return 2 * math.Atan2(det, den)
}

// PolygonArea returns the signed area of the geodesic polygon vs (great-arc edges, any
// simple polygon smaller than a hemisphere, convex or not): the sum of TriangleArea over the
// fan from vs[0]. Counter-clockwise polygons have positive area.
func PolygonArea(vs []r3.Vec) float64 {
	a := 0.0
	for k := 1; k+1 < len(vs); k++ {
		a += TriangleArea(vs[0], vs[k], vs[k+1])
	}
	return a
}

// ArcAngle returns the angle between unit vectors a and b in [0, π], accurate for tiny and
// near-antipodal angles.
func ArcAngle(a, b r3.Vec) float64 {
	return math.Atan2(math.Sqrt(r3.Norm2(r3.Cross(a, r3.Sub(b, a)))), r3.Dot(a, b))
}

// GreatCircleNormal returns the unit normal m of the great circle through a and b oriented
// so that a→b runs counter-clockwise about m: m = (a×b)/|a×b|. It returns the zero vector
// when a and b coincide.
func GreatCircleNormal(a, b r3.Vec) r3.Vec {
	c := r3.Cross(a, r3.Sub(b, a))
	n := math.Sqrt(r3.Norm2(c))
	if n == 0 {
		return r3.Vec{}
	}
	return r3.Scale(1/n, c)
}

// CircleSpan returns the signed angle swept from a to b counter-clockwise about m on the
// circle m·x = d, in (−π, π].
func CircleSpan(a, b, m r3.Vec, d float64) float64 {
	ua := r3.Sub(a, r3.Scale(d, m))
	ub := r3.Sub(b, r3.Scale(d, m))
	return math.Atan2(r3.Dot(m, r3.Cross(ua, r3.Sub(ub, ua))), r3.Dot(ua, ub))
}

// SegmentArea returns the signed area between the small-circle arc from a to b (on
// m·x = d, counter-clockwise about m) and the great-circle arc from a to b: the amount to
// add to the area of a great-arc polygon whose edge a→b is really that small-circle arc.
// It uses the identity
//
//	area(arc a→b, great b→P, great P→a) = θ(1−d)   for P = m,
//	                                   = −θ(1+d)  for P = −m,
//
// (θ the span about m; sectors of the two caps) minus the geodesic triangle abP, taking the
// pole on the same side as the circle for accuracy.
func SegmentArea(a, b, m r3.Vec, d float64) float64 {
	theta := CircleSpan(a, b, m, d)
	if d >= 0 {
		return theta*(1-d) - TriangleArea(a, b, m)
	}
	return -theta*(1+d) - TriangleArea(a, b, r3.Scale(-1, m))
}

// ArcMoment returns ½∫ x × dx along the arc from a to b of the circle m·x = d travelled
// counter-clockwise about m. Summed over the boundary of a region it gives the region's
// first moment ∫ x dA. With θ the span and ρ² = 1 − d²:
//
//	½[ρ²θ m − d sinθ (a − d m) − d(1 − cosθ) m×(a − d m)].
//
// For a great arc (d = 0) this is ½θm. Arc terms are O(arc length) and cancel around a
// closed boundary to O(area), so a region's moment carries an absolute error of a few ulps
// (relative error about ε/h² for a region of angular size h).
func ArcMoment(a, b, m r3.Vec, d float64) r3.Vec {
	theta := CircleSpan(a, b, m, d)
	if d == 0 {
		return r3.Scale(0.5*theta, m)
	}
	u := r3.Sub(a, r3.Scale(d, m))
	s := math.Sin(theta)
	h := math.Sin(theta / 2)
	omc := 2 * h * h // 1 − cos θ without cancellation
	v := r3.Scale((1-d*d)*theta, m)
	v = r3.Sub(v, r3.Scale(d*s, u))
	v = r3.Sub(v, r3.Scale(d*omc, r3.Cross(m, u)))
	return r3.Scale(0.5, v)
}

// GreatArcMoment returns ½∫ x × dx along the great arc from a to b: ½θ m with θ the arc
// angle and m the unit normal (a×b)/|a×b|.
func GreatArcMoment(a, b r3.Vec) r3.Vec {
	c := r3.Cross(a, r3.Sub(b, a))
	n := math.Sqrt(r3.Norm2(c))
	if n == 0 {
		return r3.Vec{}
	}
	theta := math.Atan2(n, r3.Dot(a, b))
	return r3.Scale(0.5*theta/n, c)
}

// ParallelCircle returns the plane (m, d) of the constant-latitude arc from a to b such
// that a→b runs counter-clockwise about m: m = +z for an eastward arc, −z for a westward
// one, and d = m·a.
func ParallelCircle(a, b r3.Vec) (m r3.Vec, d float64) {
	east := a.X*(b.Y-a.Y) - a.Y*(b.X-a.X) // z·(a×b) on differences
	if east >= 0 {
		return r3.Vec{Z: 1}, a.Z
	}
	return r3.Vec{Z: -1}, -a.Z
}

// LonLat returns the longitude in (−π, π] and latitude in [−π/2, π/2] of the unit vector p.
func LonLat(p r3.Vec) (lon, lat float64) {
	return math.Atan2(p.Y, p.X), math.Atan2(p.Z, math.Hypot(p.X, p.Y))
}

// FromLonLat returns the unit vector at longitude lon and latitude lat (radians).
func FromLonLat(lon, lat float64) r3.Vec {
	sl, cl := math.Sincos(lon)
	sp, cp := math.Sincos(lat)
	return r3.Vec{X: cp * cl, Y: cp * sl, Z: sp}
}

// Normalize returns p/|p|.
func Normalize(p r3.Vec) r3.Vec { return r3.Scale(1/math.Sqrt(r3.Norm2(p)), p) }
