package analytic

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"
)

// octants returns the 8 octant triangles that tile the unit sphere.
func octants() [][3]r3.Vec {
	var out [][3]r3.Vec
	for _, sx := range []float64{1, -1} {
		for _, sy := range []float64{1, -1} {
			for _, sz := range []float64{1, -1} {
				out = append(out, [3]r3.Vec{{X: sx}, {Y: sy}, {Z: sz}})
			}
		}
	}
	return out
}

// sphereIntegral integrates f over the whole unit sphere by tiling it
// with the 8 octant triangles.
func sphereIntegral(f Field, n int) float64 {
	var s float64
	for _, o := range octants() {
		s += SphericalTriangleIntegral(o[0], o[1], o[2], f, n)
	}
	return s
}

// step moves p by the angle d along the unit tangent dir (a great-circle
// step).
func step(p, dir r3.Vec, d float64) r3.Vec {
	s, c := math.Sincos(d)
	return r3.Add(r3.Scale(c, p), r3.Scale(s, dir))
}

// surfaceGradient returns the gradient of f on the sphere of radius
// radius at p by second-order central differences of angular step d
// along East(p) and North(p).
func surfaceGradient(f Field, p r3.Vec, radius, d float64) r3.Vec {
	e, n := East(p), North(p)
	de := (f(step(p, e, d)) - f(step(p, e, -d))) / (2 * radius * d)
	dn := (f(step(p, n, d)) - f(step(p, n, -d))) / (2 * radius * d)
	return r3.Add(r3.Scale(de, e), r3.Scale(dn, n))
}

// smallCircle calls visit for m equally spaced points q of the circle of
// angular radius r about p, with the unit tangent t (anticlockwise seen
// from outside) and the unit outward normal nu of the circle at q, and the
// arc-length weight ds = 2π sin(r)/m on the unit sphere. The periodic
// trapezoid rule this gives is spectrally accurate for smooth integrands.
func smallCircle(p r3.Vec, r float64, m int, visit func(q, t, nu r3.Vec, ds float64)) {
	e, n := East(p), North(p)
	sr, cr := math.Sincos(r)
	for k := 0; k < m; k++ {
		st, ct := math.Sincos(2 * math.Pi * float64(k) / float64(m))
		radial := r3.Add(r3.Scale(ct, e), r3.Scale(st, n))
		q := r3.Add(r3.Scale(cr, p), r3.Scale(sr, radial))
		t := r3.Add(r3.Scale(-st, e), r3.Scale(ct, n))
		nu := r3.Cross(t, q)
		visit(q, t, nu, 2*math.Pi*sr/float64(m))
	}
}

// drawPoint draws a point on the unit sphere, uniform by area, with a
// share of poles, the date line and the equator (common practice: aim
// random tests at the special places of lon–lat formulas).
func drawPoint(t *rapid.T, label string) r3.Vec {
	switch rapid.IntRange(0, 9).Draw(t, label+"-kind") {
	case 0:
		return r3.Vec{Z: 1}
	case 1:
		return r3.Vec{Z: -1}
	case 2:
		return Point(math.Pi, rapid.Float64Range(-math.Pi/2, math.Pi/2).Draw(t, label+"-lat"))
	case 3:
		return Point(rapid.Float64Range(-math.Pi, math.Pi).Draw(t, label+"-lon"), 0)
	case 4:
		// Within 1e-9 rad of a pole.
		return Point(rapid.Float64Range(-math.Pi, math.Pi).Draw(t, label+"-lon"),
			math.Pi/2-rapid.Float64Range(0, 1e-9).Draw(t, label+"-off"))
	}
	lon := rapid.Float64Range(-math.Pi, math.Pi).Draw(t, label+"-lon")
	z := rapid.Float64Range(-1, 1).Draw(t, label+"-z")
	return Point(lon, math.Asin(z))
}

// drawCapPoint draws a point within angular distance r of the unit vector
// c.
func drawCapPoint(t *rapid.T, c r3.Vec, r float64, label string) r3.Vec {
	d := rapid.Float64Range(0, r).Draw(t, label+"-d")
	az := rapid.Float64Range(0, 2*math.Pi).Draw(t, label+"-az")
	sa, ca := math.Sincos(az)
	return step(c, r3.Add(r3.Scale(ca, East(c)), r3.Scale(sa, North(c))), d)
}
