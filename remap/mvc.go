package remap

import "math"

// onEdgeShare: an angle within this of π at the origin (sin of the deviation) puts the
// origin on the edge, and a vertex closer than this share of the longest edge puts it on
// the vertex; the weights then differ from the exact limit by about this share, which is
// rounding level, and the huge tangents and inverse distances cannot overflow or leave
// rounding-sized negative weights.
const onEdgeShare = 1e-15

// polygonWeights sets w[i] to the generalised barycentric coordinates of the origin with
// respect to the counter-clockwise polygon q (len(w) = len(q) ≥ 3) and returns how far the
// origin lies outside the polygon as a share of its longest edge (0 inside or on the
// boundary).
//
// Triangles get barycentric coordinates (ratios of signed sub-triangle areas). Larger
// polygons get the mean value coordinates of Floater (2003):
//
//	w_i = (tan(α_{i−1}/2) + tan(α_i/2)) / |q_i|,   λ_i = w_i / Σ_j w_j,
//
// with α_i the signed angle at the origin from q_i to q_{i+1}. Both reproduce linear
// functions exactly (Σ λ_i q_i = 0 and Σ λ_i = 1, up to rounding), both are positive
// inside convex polygons, and mean value coordinates are defined for any simple polygon
// (Hormann & Floater 2006 extend them to the whole plane; outside they extrapolate). On
// the boundary they reduce to linear interpolation along the edge.
//
// tan(α/2) is evaluated as A/(r r' + D) when D ≥ 0 and (r r' − D)/A when D < 0 (A the
// cross and D the dot product of q_i and q_{i+1}, r and r' their lengths), which avoids
// cancellation in both the small-angle and the near-straight cases.
//
// References:
//   - Floater, M. S. (2003), Mean value coordinates, Comput. Aided Geom. Des. 20:19–27.
//   - Hormann, K. & Floater, M. S. (2006), Mean value coordinates for arbitrary planar
//     polygons, ACM Trans. Graph. 25(4):1424–1441.
func polygonWeights(q [][2]float64, w []float64) (outside float64) {
	n := len(q)
	if len(w) != n || n < 3 {
		panic("remap: polygonWeights: need len(w) = len(q) ≥ 3")
	}
	inside := windingNumber(q) != 0
	size := longestEdge(q)
	if !inside {
		outside = boundaryDistance(q) / size
	}
	if n == 3 {
		var sum float64
		for i := 0; i < 3; i++ {
			a, b := q[(i+1)%3], q[(i+2)%3]
			w[i] = a[0]*b[1] - a[1]*b[0]
			sum += w[i]
		}
		for i := range w {
			w[i] /= sum
		}
		if inside {
			// Rounding can leave −1e-17 on an edge; barycentric coordinates are ≥ 0 there.
			sum = 0
			for i := range w {
				w[i] = math.Max(w[i], 0)
				sum += w[i]
			}
			for i := range w {
				w[i] /= sum
			}
		}
		return outside
	}
	// Mean value coordinates. A vertex at the origin, or the origin on an edge, takes the
	// limit: the vertex itself (Lagrange property), or linear interpolation along that
	// edge.
	var rBuf, tBuf [32]float64
	r, tanHalf := rBuf[:0], tBuf[:0]
	if n > len(rBuf) {
		r, tanHalf = make([]float64, 0, n), make([]float64, 0, n)
	}
	r, tanHalf = r[:n], tanHalf[:n]
	for i, p := range q {
		r[i] = math.Hypot(p[0], p[1])
		if r[i] <= onEdgeShare*size {
			for j := range w {
				w[j] = 0
			}
			w[i] = 1
			return 0
		}
	}
	for i := 0; i < n; i++ {
		j := (i + 1) % n
		a, b := q[i], q[j]
		cr := a[0]*b[1] - a[1]*b[0]
		dt := a[0]*b[0] + a[1]*b[1]
		rr := r[i] * r[j]
		if dt < 0 && math.Abs(cr) <= onEdgeShare*rr { // on the edge between q_i and q_j
			for k := range w {
				w[k] = 0
			}
			w[i] = r[j] / (r[i] + r[j])
			w[j] = r[i] / (r[i] + r[j])
			return 0
		}
		if dt >= 0 {
			tanHalf[i] = cr / (rr + dt)
		} else {
			tanHalf[i] = (rr - dt) / cr
		}
	}
	var sum float64
	for i := 0; i < n; i++ {
		w[i] = (tanHalf[(i+n-1)%n] + tanHalf[i]) / r[i]
		sum += w[i]
	}
	for i := range w {
		w[i] /= sum
	}
	return outside
}

// windingNumber returns the winding number of the polygon q about the origin (Sunday's
// crossing rule with the same cross products as the weights, so two polygons sharing an
// edge classify a point on the same side of it).
func windingNumber(q [][2]float64) int {
	wn := 0
	n := len(q)
	for i := 0; i < n; i++ {
		a, b := q[i], q[(i+1)%n]
		cr := a[0]*b[1] - a[1]*b[0]
		if a[1] <= 0 {
			if b[1] > 0 && cr > 0 {
				wn++
			}
		} else if b[1] <= 0 && cr < 0 {
			wn--
		}
	}
	return wn
}

// boundaryDistance returns the distance from the origin to the polygon's boundary.
func boundaryDistance(q [][2]float64) float64 {
	best := math.Inf(1)
	n := len(q)
	for i := 0; i < n; i++ {
		a, b := q[i], q[(i+1)%n]
		dx, dy := b[0]-a[0], b[1]-a[1]
		l2 := dx*dx + dy*dy
		t := 0.0
		if l2 > 0 {
			t = math.Max(0, math.Min(1, -(a[0]*dx+a[1]*dy)/l2))
		}
		best = math.Min(best, math.Hypot(a[0]+t*dx, a[1]+t*dy))
	}
	return best
}

func longestEdge(q [][2]float64) float64 {
	l := 0.0
	for i := range q {
		a, b := q[i], q[(i+1)%len(q)]
		l = math.Max(l, math.Hypot(b[0]-a[0], b[1]-a[1]))
	}
	return l
}
