package analytic

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"
)

// tolBasis: angles and basis vectors come from a handful of products, one
// square root or atan2; 4 ulps of 1 covers their rounding.
const tolBasis = 1e-15

func TestPointLonLat(t *testing.T) {
	// Common practice: spherical coordinates (cos φ cos λ, cos φ sin λ, sin φ)
	// and their inverse by atan2.
	cases := []struct {
		name     string
		lon, lat float64
		want     r3.Vec
		wantLon  float64 // longitude LonLat should report
	}{
		{"origin", 0, 0, r3.Vec{X: 1}, 0},
		{"east", math.Pi / 2, 0, r3.Vec{Y: 1}, math.Pi / 2},
		{"north pole", 1.3, math.Pi / 2, r3.Vec{Z: 1}, 0},
		{"south pole", -2, -math.Pi / 2, r3.Vec{Z: -1}, 0},
		{"date line", math.Pi, 0, r3.Vec{X: -1}, math.Pi},
		{"beyond pi wraps", 3 * math.Pi / 2, 0, r3.Vec{Y: -1}, -math.Pi / 2},
	}
	for _, c := range cases {
		p := Point(c.lon, c.lat)
		if r3.Norm(r3.Sub(p, c.want)) > tolBasis {
			t.Errorf("%s: Point = %v, want %v", c.name, p, c.want)
		}
		lon, lat := LonLat(c.want)
		if math.Abs(lon-c.wantLon) > tolBasis || math.Abs(lat-c.lat) > tolBasis {
			t.Errorf("%s: LonLat = (%v, %v), want (%v, %v)", c.name, lon, lat, c.wantLon, c.lat)
		}
	}
}

func TestLonLatRoundTrip(t *testing.T) {
	// Property (common practice): LonLat inverts Point to a few ulps,
	// longitudes in (−π, π], and ignores the length of p.
	rapid.Check(t, func(t *rapid.T) {
		lon := rapid.Float64Range(-math.Pi, math.Pi).Draw(t, "lon")
		lat := rapid.Float64Range(-math.Pi/2+1e-6, math.Pi/2-1e-6).Draw(t, "lat")
		scale := rapid.Float64Range(1e-3, 1e3).Draw(t, "scale")
		gl, gp := LonLat(r3.Scale(scale, Point(lon, lat)))
		dl := math.Remainder(gl-lon, 2*math.Pi)
		if math.Abs(dl) > tolBasis || math.Abs(gp-lat) > tolBasis {
			t.Fatalf("LonLat(Point(%v,%v)) = (%v,%v)", lon, lat, gl, gp)
		}
	})
}

func TestEastNorthBasis(t *testing.T) {
	// Common analytic facts: East = (−sin λ, cos λ, 0),
	// North = (−sin φ cos λ, −sin φ sin λ, cos φ); East, North, p form a
	// right-handed orthonormal basis.
	rapid.Check(t, func(t *rapid.T) {
		p := drawPoint(t, "p")
		e, n := East(p), North(p)
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"|E|", r3.Norm(e), 1},
			{"|N|", r3.Norm(n), 1},
			{"E·N", r3.Dot(e, n), 0},
			{"E·p", r3.Dot(e, p), 0},
			{"N·p", r3.Dot(n, p), 0},
			{"(E×N)·p", r3.Dot(r3.Cross(e, n), p), 1},
		} {
			if math.Abs(c.got-c.want) > tolBasis {
				t.Fatalf("%s = %v, want %v at %v", c.name, c.got, c.want, p)
			}
		}
		lon, lat := LonLat(p)
		wantE := r3.Vec{X: -math.Sin(lon), Y: math.Cos(lon)}
		wantN := r3.Vec{X: -math.Sin(lat) * math.Cos(lon), Y: -math.Sin(lat) * math.Sin(lon), Z: math.Cos(lat)}
		if r3.Norm(r3.Sub(e, wantE)) > tolBasis || r3.Norm(r3.Sub(n, wantN)) > tolBasis {
			t.Fatalf("basis at %v: E=%v N=%v, want %v %v", p, e, n, wantE, wantN)
		}
	})
}

func TestPoleConvention(t *testing.T) {
	// Documented convention: at the poles, the limit along λ = 0.
	cases := []struct {
		name         string
		p            r3.Vec
		east, north  r3.Vec
		approachSign float64
	}{
		{"north", r3.Vec{Z: 1}, r3.Vec{Y: 1}, r3.Vec{X: -1}, 1},
		{"south", r3.Vec{Z: -1}, r3.Vec{Y: 1}, r3.Vec{X: 1}, -1},
	}
	for _, c := range cases {
		if East(c.p) != c.east || r3.Norm(r3.Sub(North(c.p), c.north)) > tolBasis {
			t.Errorf("%s pole: East=%v North=%v, want %v %v", c.name, East(c.p), North(c.p), c.east, c.north)
		}
		// Continuity with the limit along λ = 0.
		q := Point(0, c.approachSign*(math.Pi/2-1e-9))
		if r3.Norm(r3.Sub(East(q), c.east)) > 1e-8 || r3.Norm(r3.Sub(North(q), c.north)) > 1e-8 {
			t.Errorf("%s pole: basis is not the λ = 0 limit", c.name)
		}
	}
}
