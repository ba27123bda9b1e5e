package conserve

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"
)

// tolExpMean: PolygonExpMean is closed form with an absolute error of a few ulps of the
// unit amplitude; 1e-14 allows for the fan sum and the divided-difference quotient.
const tolExpMean = 1e-14

func sinc(x float64) float64 {
	if x == 0 {
		return 1
	}
	return math.Sin(x) / x
}

// TestPolygonExpMeanRectangle checks the mean of e^{ik·x} over axis-aligned rectangles
// against the analytic product e^{ik·c}·sinc(kx a/2)·sinc(ky b/2) (elementary calculus:
// ∫_{c−a/2}^{c+a/2} e^{ikx} dx = a·e^{ikc}·sin(ka/2)/(ka/2)).
func TestPolygonExpMeanRectangle(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	cases := []struct{ kx, ky float64 }{
		{0, 0}, {1, 0}, {0, 1}, {math.Pi, math.Pi}, {1e-9, 3}, {7, -2}, {20, 15},
	}
	for _, c := range cases {
		for range 20 {
			x0, y0 := rng.Float64()*10, rng.Float64()*10
			a, b := 0.1+rng.Float64(), 0.1+rng.Float64()
			vs := []r3.Vec{{X: x0, Y: y0}, {X: x0 + a, Y: y0}, {X: x0 + a, Y: y0 + b}, {X: x0, Y: y0 + b}}
			got := PolygonExpMean(c.kx, c.ky, vs)
			want := cmplx.Exp(complex(0, c.kx*(x0+a/2)+c.ky*(y0+b/2))) * complex(sinc(c.kx*a/2)*sinc(c.ky*b/2), 0)
			if cmplx.Abs(got-want) > tolExpMean {
				t.Errorf("k=(%g,%g) rect %g×%g at (%g,%g): got %v want %v (diff %.2e)", c.kx, c.ky, a, b, x0, y0, got, want, cmplx.Abs(got-want))
			}
		}
	}
}

// TestPolygonExpMeanTriangleQuadrature checks triangles against an independent
// Gauss–Legendre rule on the collapsed square (Duffy transform; gonum's quad.Legendre
// nodes), which converges geometrically for the entire function e^{ik·x}; 30 points per
// direction integrate phases up to ≈ 20 radians across the triangle to rounding.
func TestPolygonExpMeanTriangleQuadrature(t *testing.T) {
	const n = 30
	x := make([]float64, n)
	wt := make([]float64, n)
	quad.Legendre{}.FixedLocations(x, wt, 0, 1)
	rng := rand.New(rand.NewPCG(3, 4))
	for range 200 {
		vs := []r3.Vec{{X: rng.Float64(), Y: rng.Float64()}, {X: rng.Float64(), Y: rng.Float64()}, {X: rng.Float64(), Y: rng.Float64()}}
		cr := (vs[1].X-vs[0].X)*(vs[2].Y-vs[0].Y) - (vs[2].X-vs[0].X)*(vs[1].Y-vs[0].Y)
		if math.Abs(cr) < 1e-3 {
			continue
		}
		if cr < 0 {
			vs[1], vs[2] = vs[2], vs[1]
		}
		kx, ky := 20*(2*rng.Float64()-1), 20*(2*rng.Float64()-1)
		var sum complex128
		for i := range x {
			for j := range x {
				// p = v0 + s((v1 − v0) + t(v2 − v1)), dA = 2A·s ds dt.
				s, tt := x[i], x[j]
				px := vs[0].X + s*((vs[1].X-vs[0].X)+tt*(vs[2].X-vs[1].X))
				py := vs[0].Y + s*((vs[1].Y-vs[0].Y)+tt*(vs[2].Y-vs[1].Y))
				sum += complex(wt[i]*wt[j]*2*s, 0) * cmplx.Exp(complex(0, kx*px+ky*py))
			}
		}
		got := PolygonExpMean(kx, ky, vs)
		if cmplx.Abs(got-sum) > 1e-13 {
			t.Errorf("triangle %v k=(%g,%g): got %v quadrature %v", vs, kx, ky, got, sum)
		}
	}
}

// TestPolygonExpMeanDegenerateNodes: nodes that coincide (k ⟂ an edge, k = 0) must give
// the limit values; the mean of e^{ikx} over the right triangle (0,0),(1,0),(0,1) is
// 2(e^{ik} − 1 − ik)/(ik)² (elementary integration).
func TestPolygonExpMeanDegenerateNodes(t *testing.T) {
	vs := []r3.Vec{{X: 0, Y: 0}, {X: 1, Y: 0}, {X: 0, Y: 1}}
	for _, k := range []float64{1e-12, 1e-6, 0.3, 1, 2.5, 9} {
		z := complex(0, k)
		want := 2 * (cmplx.Exp(z) - 1 - z) / (z * z)
		if k < 1e-3 {
			want = 1 + z/3 + z*z/12 // series: 2(1/2 + z/6 + z²/24 + …)
		}
		got := PolygonExpMean(k, 0, vs)
		if cmplx.Abs(got-want) > tolExpMean {
			t.Errorf("k=%g: got %v want %v", k, got, want)
		}
	}
	if got := PolygonExpMean(0, 0, vs); cmplx.Abs(got-1) > 1e-16 {
		t.Errorf("k=0: got %v want 1", got)
	}
}

// polygonArea is the shoelace area, relative to the first vertex (no cancellation for
// small polygons far from the origin).
func polygonArea(vs []r3.Vec) float64 {
	a := 0.0
	o := vs[0]
	for i := range vs {
		p, q := vs[i], vs[(i+1)%len(vs)]
		a += (p.X-o.X)*(q.Y-o.Y) - (q.X-o.X)*(p.Y-o.Y)
	}
	return a / 2
}

// TestPolygonExpMeanProperties: properties any exact cell mean of e^{ik·x} has
// (integration facts): additivity over a split of the cell, the shift rule
// mean(P + d) = e^{ik·d}·mean(P), independence of the starting vertex, and |mean| ≤ 1.
func TestPolygonExpMeanProperties(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		// A convex quadrilateral: four points on an ellipse at increasing angles.
		a0 := rapid.Float64Range(0, 1.5).Draw(t, "a0")
		steps := []float64{
			rapid.Float64Range(0.3, 1.5).Draw(t, "s1"),
			rapid.Float64Range(0.3, 1.5).Draw(t, "s2"),
			rapid.Float64Range(0.3, 1.5).Draw(t, "s3"),
		}
		rx := rapid.Float64Range(0.05, 2).Draw(t, "rx")
		ry := rapid.Float64Range(0.05, 2).Draw(t, "ry")
		cx := rapid.Float64Range(-10, 10).Draw(t, "cx")
		cy := rapid.Float64Range(-10, 10).Draw(t, "cy")
		kx := rapid.Float64Range(-20, 20).Draw(t, "kx")
		ky := rapid.Float64Range(-20, 20).Draw(t, "ky")
		ang := []float64{a0, a0 + steps[0], a0 + steps[0] + steps[1], a0 + steps[0] + steps[1] + steps[2]}
		if ang[3]-ang[0] >= 2*math.Pi-0.3 {
			t.Skip("not convex")
		}
		vs := make([]r3.Vec, 4)
		for i, a := range ang {
			vs[i] = r3.Vec{X: cx + rx*math.Cos(a), Y: cy + ry*math.Sin(a)}
		}
		m := PolygonExpMean(kx, ky, vs)
		if cmplx.Abs(m) > 1+1e-14 {
			t.Fatalf("|mean| = %g > 1", cmplx.Abs(m))
		}
		t1 := []r3.Vec{vs[0], vs[1], vs[2]}
		t2 := []r3.Vec{vs[0], vs[2], vs[3]}
		a, a1, a2 := polygonArea(vs), polygonArea(t1), polygonArea(t2)
		sum := (complex(a1, 0)*PolygonExpMean(kx, ky, t1) + complex(a2, 0)*PolygonExpMean(kx, ky, t2)) / complex(a, 0)
		// Split along the other diagonal too.
		u1 := []r3.Vec{vs[1], vs[2], vs[3]}
		u2 := []r3.Vec{vs[1], vs[3], vs[0]}
		sumB := (complex(polygonArea(u1), 0)*PolygonExpMean(kx, ky, u1) + complex(polygonArea(u2), 0)*PolygonExpMean(kx, ky, u2)) / complex(a, 0)
		rot := PolygonExpMean(kx, ky, []r3.Vec{vs[2], vs[3], vs[0], vs[1]})
		d := r3.Vec{X: rapid.Float64Range(-5, 5).Draw(t, "dx"), Y: rapid.Float64Range(-5, 5).Draw(t, "dy")}
		moved := make([]r3.Vec, 4)
		for i := range vs {
			moved[i] = r3.Add(vs[i], d)
		}
		shift := cmplx.Exp(complex(0, kx*d.X+ky*d.Y)) * m
		// Areas of thin quadrilaterals weigh the triangle errors by up to a few times;
		// 1e-12 absolute still separates rounding from a wrong formula by far.
		for name, v := range map[string]complex128{"split": sum, "other split": sumB, "rotated": rot, "shifted": PolygonExpMean(kx, ky, moved)} {
			want := m
			if name == "shifted" {
				want = shift
			}
			if cmplx.Abs(v-want) > 1e-12 {
				t.Fatalf("%s: %v, want %v", name, v, want)
			}
		}
	})
}
