package conserve

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/spatial/r3"
)

// PolygonExpMean returns the mean of e^{i(kx·x + ky·y)} over the planar polygon with the
// given vertices (counter-clockwise, convex or star-shaped from its first vertex), in
// closed form: the polygon is split into a fan of triangles from its first vertex, and
// over a triangle with vertices v_j and area A,
//
//	∫_T e^{ik·x} dA = 2A · e[z₀, z₁, z₂],  z_j = i k·v_j,
//
// the second divided difference of exp at the z_j (Hermite–Genocchi formula: the
// divided difference is the integral of the second derivative over the standard simplex).
// Divided differences are evaluated about the mean node, by the recurrence when the
// nodes spread more than 2 apart (the difference quotient then loses nothing) and by the
// series Σ h_n(w)/(n+2)! of complete symmetric polynomials otherwise, so the result has
// an absolute error of a few ulps for any k and any triangle, including k = 0 (mean 1)
// and k orthogonal to an edge. For an axis-aligned rectangle of sides a, b and centre c
// this equals e^{ik·c}·sinc(kx·a/2)·sinc(ky·b/2) (checked in the tests).
func PolygonExpMean(kx, ky float64, vs []r3.Vec) complex128 {
	var sum complex128
	var area float64
	o := vs[0]
	for j := 1; j+1 < len(vs); j++ {
		a, b := vs[j], vs[j+1]
		cr := ((a.X-o.X)*(b.Y-o.Y) - (b.X-o.X)*(a.Y-o.Y)) / 2
		if cr == 0 {
			continue
		}
		// Phases relative to the first vertex; e^{ik·o} is factored out below, so
		// cells far from the origin lose nothing in the divided differences.
		z1 := kx*(a.X-o.X) + ky*(a.Y-o.Y)
		z2 := kx*(b.X-o.X) + ky*(b.Y-o.Y)
		sum += complex(2*cr, 0) * expDivDiff3(0, z1, z2)
		area += cr
	}
	if area == 0 {
		return 0
	}
	return cmplx.Exp(complex(0, kx*o.X+ky*o.Y)) * sum / complex(area, 0)
}

// expDivDiff3 returns the divided difference of exp at i·a, i·b, i·c.
func expDivDiff3(a, b, c float64) complex128 {
	m := (a + b + c) / 3
	w := [3]float64{a - m, b - m, c - m}
	phase := cmplx.Exp(complex(0, m))
	spread := math.Max(math.Abs(w[0]-w[1]), math.Max(math.Abs(w[1]-w[2]), math.Abs(w[0]-w[2])))
	if spread <= 2 {
		return phase * expDivDiffSeries(w)
	}
	// Order so that |w0 − w2| is the largest spread: the final quotient is then
	// well conditioned.
	switch spread {
	case math.Abs(w[0] - w[1]):
		w[1], w[2] = w[2], w[1]
	case math.Abs(w[1] - w[2]):
		w[0], w[1] = w[1], w[0]
	}
	d01 := expDivDiff2(w[0], w[1])
	d12 := expDivDiff2(w[1], w[2])
	return phase * (d12 - d01) / complex(0, w[2]-w[0])
}

// expDivDiff2 returns the divided difference of exp at i·a and i·b: e^{ia}·φ₁(i(b−a)) with
// φ₁(u) = (e^u − 1)/u, by its series for small |u|.
func expDivDiff2(a, b float64) complex128 {
	u := complex(0, b-a)
	ea := cmplx.Exp(complex(0, a))
	if math.Abs(b-a) < 0.5 {
		// φ₁(u) = Σ u^n/(n+1)!; 20 terms leave < 0.5²⁰/21! ≈ 2e-26.
		s, t := complex(1, 0), complex(1, 0)
		for n := 1; n < 20; n++ {
			t *= u / complex(float64(n+1), 0)
			s += t
		}
		return ea * s
	}
	return ea * (cmplx.Exp(u) - 1) / u
}

// expDivDiffSeries returns the divided difference of exp at i·w_j (|w_j − w_l| ≤ 2 and
// Σ w_j = 0, so |w_j| ≤ 4/3): Σ_n h_n(iw)/(n+2)!, h_n the complete homogeneous symmetric
// polynomial of degree n. 40 terms leave < 3·41·(4/3)⁴⁰/42! ≈ 1e-44.
func expDivDiffSeries(w [3]float64) complex128 {
	const terms = 40
	var h [terms]complex128
	h[0] = 1
	for _, x := range w {
		z := complex(0, x)
		for n := 1; n < terms; n++ {
			h[n] += z * h[n-1]
		}
	}
	var s complex128
	f := 0.5 // 1/(n+2)! at n = 0
	for n := 0; n < terms; n++ {
		s += h[n] * complex(f, 0)
		f /= float64(n + 3)
	}
	return s
}
