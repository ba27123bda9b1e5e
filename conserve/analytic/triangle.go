package analytic

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// TriangleArea returns the area (solid angle) of the geodesic triangle
// with vertices a, b, c on the unit sphere by the formula of Van Oosterom
// & Strackee (1983), IEEE Trans. Biomed. Eng. 30(2):125–126:
//
//	E = 2·atan2(|a·(b×c)|, 1 + a·b + b·c + c·a).
//
// Inputs are normalised first. The result lies in [0, 2π); it is the
// area of the triangle whose edges are the shorter arcs. The octant
// (x̂, ŷ, ẑ) gives π/2.
func TriangleArea(a, b, c r3.Vec) float64 {
	a, b, c = unit(a), unit(b), unit(c)
	det := tripleProduct(a, b, c)
	return 2 * math.Atan2(math.Abs(det), 1+r3.Dot(a, b)+r3.Dot(b, c)+r3.Dot(c, a))
}

// SphericalTriangleIntegral returns ∫ f dA over the geodesic triangle
// with vertices a, b, c on the unit sphere (edges the shorter great-circle
// arcs; vertices are normalised first), whatever the orientation.
//
// Method: the flat triangle q = (1−s)a + s((1−t)b + t c), s, t ∈ [0, 1]
// (a Duffy collapse of the unit square onto the triangle at vertex a) is
// projected centrally onto the sphere, p = q/|q|; the projection of the
// straight segment between two vertices is the great-circle arc between
// them, so the image is exactly the geodesic triangle. The area element
// is
//
//	dA = |a·(b×c)| s / |q|³ ds dt,
//
// and an n×n tensor Gauss–Legendre rule integrates f(q/|q|)·dA/ds dt.
// Triangles with an edge longer than π/2 are first split into four by the
// geodesic edge midpoints (recursively), so every piece has edges of at
// most π/2 and |q| ≥ 1/√3 on it; the integrand is then analytic for
// analytic f and the error falls geometrically with n at a rate that does
// not depend on the triangle. Measured in the tests: the integral of 1
// matches TriangleArea to 1e-14 relative from n = 20 for any triangle
// (the octant is the slowest piece: 3e-15 at n = 20, 3e-16 at n = 24), and
// ∫z² over the sphere (8 octants) is 4π/3 to 2e-14 at n = 20 and to
// rounding (2e-16) at n = 24. Near-hemispherical
// triangles, whose flat triangle passes at distance d from the centre,
// need about log₂(1/d) levels of splitting.
//
// Degenerate triangles (vertices coplanar with the centre) give 0. It
// panics if n < 1. Cost: n² evaluations of f per piece.
func SphericalTriangleIntegral(a, b, c r3.Vec, f Field, n int) float64 {
	a, b, c = unit(a), unit(b), unit(c)
	if tripleProduct(a, b, c) < 0 {
		b, c = c, b
	}
	return signedTriangleIntegral(a, b, c, f, n)
}

// signedTriangleIntegral is the integral over the triangle of unit vectors
// a, b, c, signed positive when a, b, c run anticlockwise seen from
// outside (a·(b×c) > 0). A triangle with an edge longer than π/2 (a
// negative dot product between two vertices) is first split into four by
// the normalised edge midpoints; the four geodesic triangles tile it
// exactly and keep its orientation.
func signedTriangleIntegral(a, b, c r3.Vec, f Field, n int) float64 {
	x, w := gaussLegendre(n)
	det := tripleProduct(a, b, c)
	if det == 0 {
		return 0
	}
	if r3.Dot(a, b) < 0 || r3.Dot(b, c) < 0 || r3.Dot(c, a) < 0 {
		ab, bc, ca := unit(r3.Add(a, b)), unit(r3.Add(b, c)), unit(r3.Add(c, a))
		return signedTriangleIntegral(a, ab, ca, f, n) +
			signedTriangleIntegral(ab, b, bc, f, n) +
			signedTriangleIntegral(ca, bc, c, f, n) +
			signedTriangleIntegral(ab, bc, ca, f, n)
	}
	ba := r3.Sub(b, a)
	cb := r3.Sub(c, b)
	var sum float64
	for i, xi := range x {
		s := (xi + 1) / 2
		var inner float64
		for j, xj := range x {
			t := (xj + 1) / 2
			// q = a + s((b − a) + t(c − b)).
			q := r3.Add(a, r3.Scale(s, r3.Add(ba, r3.Scale(t, cb))))
			r := r3.Norm(q)
			inner += w[j] * f(r3.Scale(1/r, q)) / (r * r * r)
		}
		sum += w[i] * s * inner
	}
	return sum * det / 4
}

// tripleProduct returns a·(b×c) computed as a·((b−a)×(c−a)), which keeps
// its relative accuracy for small triangles (the two are equal in exact
// arithmetic).
func tripleProduct(a, b, c r3.Vec) float64 {
	return r3.Dot(a, r3.Cross(r3.Sub(b, a), r3.Sub(c, a)))
}

// PolygonIntegral returns ∫ f dA over the geodesic polygon with the given
// vertices on the unit sphere (either orientation; vertices normalised
// first), using an n×n rule on each triangle of the fan from the
// normalised vertex mean c (see SphericalTriangleIntegral).
//
// The polygon must be convex and lie in an open hemisphere, or more
// generally be simple and star-shaped with respect to c: the fan
// triangles are summed with the sign of their orientation, so repeated
// vertices (zero-area triangles) are harmless. If the vertex mean is the
// zero vector the polygon is not in any open hemisphere and the result is
// NaN. It panics if fewer than 3 vertices are given or n < 1.
// Cost: len(vertices)·n² evaluations of f.
func PolygonIntegral(vertices []r3.Vec, f Field, n int) float64 {
	if len(vertices) < 3 {
		panic(fmt.Sprintf("analytic: polygon with %d vertices", len(vertices)))
	}
	var c r3.Vec
	for _, v := range vertices {
		c = r3.Add(c, unit(v))
	}
	if r3.Norm(c) == 0 {
		return math.NaN()
	}
	c = unit(c)
	var sum, orient float64
	for i := range vertices {
		a, b := unit(vertices[i]), unit(vertices[(i+1)%len(vertices)])
		sum += signedTriangleIntegral(c, a, b, f, n)
		orient += tripleProduct(c, a, b)
	}
	if orient < 0 {
		return -sum
	}
	return sum
}
