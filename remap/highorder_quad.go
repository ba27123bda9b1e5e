package remap

import (
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

// localFrame is the coordinate system of one source cell's reconstruction.
//
// On the sphere it is the gnomonic projection about the cell's centroid direction c:
// ξ = x·e1/x·c, η = x·e2/x·c with e1 × e2 = c, in which great arcs are straight lines and
// the area element is dA = (1 + ξ² + η²)^(−3/2) dξ dη. On the plane it is the offset from
// the cell's centroid, in the frame of the cell's first vertex (the frame overlap
// polygons come in). The polynomial variables are X = ξ/h, Y = η/h with h the square
// root of the cell's area, so that monomials over the cell and its neighbours are O(1).
type localFrame struct {
	sphere    bool
	c, e1, e2 r3.Vec
	inv       float64 // 1/h
}

// newLocalFrame returns the frame of cell s of m.
func newLocalFrame(m *grids.Mesh, s int) localFrame {
	a := m.CellArea[s] / (m.Scale() * m.Scale())
	f := localFrame{sphere: m.Surface == grids.Sphere, inv: 1 / math.Sqrt(a)}
	if f.sphere {
		f.c = m.CellCentroid[s]
		f.e1 = r3.Unit(r3.Cross(f.c, anyPerp(f.c)))
		f.e2 = r3.Cross(f.c, f.e1)
		return f
	}
	// CellMoment is in the frame of the cell's first vertex, like overlap polygons.
	f.c = r3.Scale(1/a, m.CellMoment(s))
	f.e1, f.e2 = r3.Vec{X: 1}, r3.Vec{Y: 1}
	return f
}

// project returns the frame coordinates (ξ, η) of p (unscaled). On the sphere p must lie
// in the open hemisphere about c.
func (f *localFrame) project(p r3.Vec) (float64, float64) {
	if f.sphere {
		q := p.X*f.c.X + p.Y*f.c.Y + p.Z*f.c.Z
		return (p.X*f.e1.X + p.Y*f.e1.Y + p.Z*f.e1.Z) / q, (p.X*f.e2.X + p.Y*f.e2.Y + p.Z*f.e2.Z) / q
	}
	return p.X - f.c.X, p.Y - f.c.Y
}

// minGnomonicCos is the smallest cosine of the angle from a frame's centre that a point
// of a reconstruction patch may have: beyond ~80° the gnomonic projection stretches by
// more than (1/0.17)³ ≈ 200 and the fit would be meaningless (common practice: patches
// stay local). Only meshes of a few dozen cells come near it.
const minGnomonicCos = 0.17

// numMonomials returns the number of monomials X^i Y^j with i + j ≤ p.
func numMonomials(p int) int { return (p + 1) * (p + 2) / 2 }

// Monomials are ordered by total degree d, then by the power of Y: index k of X^(d−j) Y^j
// is d(d+1)/2 + j. Index 0 is the constant.

// quadRule holds the Gauss rules the moment integrator uses.
//
// A straight-sided triangle (v0, a, b) is integrated by the collapsed (Duffy) product
// rule: x = v0 + s(a − v0) + st(b − a), dA = s |(a−v0)×(b−v0)| ds dt, with n-point
// Gauss–Legendre in t and n-point Gauss–Jacobi (weight s) in s, exact for polynomials of
// total degree 2n − 1 (Stroud 1971, Approximate Calculation of Multiple Integrals,
// collapsed product rules; from memory). A curved side g(θ) seen from the apex v0 is the
// region x = v0 + s(g(θ) − v0), dA = s (g(θ)−v0)×g′(θ) ds dθ, integrated with the same s
// rule and Gauss–Legendre in θ.
type quadRule struct {
	tri    []triNode // for the reference triangle: weights sum to 1/2
	sx, sw []float64 // Gauss–Jacobi on [0,1] with weight s: ∫₀¹ s g(s) ds ≈ Σ sw g(sx)
	arcX   []float64 // Gauss–Legendre on [0,1] for the arc angle
	arcW   []float64
	p      int
}

// triNode is a node of the reference triangle (v0, a, b): the point v0 + l1(a − v0) +
// l2(b − v0), weight w.
type triNode struct{ l1, l2, w float64 }

// newQuadRule returns the rules for reconstructions of degree p ≤ 3: n = 4 points per
// triangle direction, so triangles are integrated exactly to degree 7 ≥ p + 4, which
// covers the polynomial times the gnomonic Jacobian
// 1 − (3/2)(ξ² + η²) + (15/8)(ξ² + η²)² + O(h⁶) to its O(h⁴) term: the relative
// quadrature error of a region of size h is O(h⁸), far below the O(h^(p+1)) of the
// reconstruction (measured on whole cells: ≤ 1.1e-13 on cubed N=24 and 2° lat–lon cells,
// 1.2e-10 on 10° cells; one more point changes the observed convergence orders in no
// digit shown). Curved sides get n points in the arc angle (see integrate). Higher
// degrees get n = p + 1.
func newQuadRule(p int) *quadRule {
	if p < 0 || p > 7 {
		panic("remap: reconstruction degree out of range")
	}
	n := max(4, p+1)
	return newQuadRuleN(p, n, n)
}

// newQuadRuleN returns the rules with n points per triangle direction and nArc points in
// the arc angle.
func newQuadRuleN(p, n, nArc int) *quadRule {
	r := &quadRule{p: p}
	tx, tw := gaussJacobi01(n, 0)
	r.sx, r.sw = gaussJacobi01(n, 1)
	for i := range tx {
		for j := range r.sx {
			s, t := r.sx[j], tx[i]
			r.tri = append(r.tri, triNode{l1: s * (1 - t), l2: s * t, w: tw[i] * r.sw[j]})
		}
	}
	r.arcX, r.arcW = gaussJacobi01(nArc, 0)
	return r
}

// gaussJacobi01 returns the n-point Gauss rule on [0, 1] for the weight s^b (b = 0:
// Gauss–Legendre; b = 1: the radial direction of a collapsed triangle), by the
// Golub–Welsch method (Golub & Welsch 1969, Math. Comp. 23:221–230): the nodes are the
// eigenvalues of the Jacobi matrix of the monic Jacobi polynomials P^(0,b) on [−1, 1],
// the weights μ₀ times the squared first components of the eigenvectors. Recurrence
// coefficients from Abramowitz & Stegun 22.7 (from memory; checked by the tests against
// moments ∫ s^(b+k) ds = 1/(b+k+1)).
func gaussJacobi01(n, b int) (x, w []float64) {
	beta := float64(b)
	j := mat.NewSymDense(n, nil)
	for k := 0; k < n; k++ {
		kk := float64(k)
		den := (2*kk + beta) * (2*kk + beta + 2)
		if den != 0 {
			j.SetSym(k, k, beta*beta/den)
		}
		if k > 0 {
			s := 2*kk + beta
			bk := 4 * kk * kk * (kk + beta) * (kk + beta) / (s * s * (s + 1) * (s - 1))
			j.SetSym(k, k-1, math.Sqrt(bk))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(j, true) {
		panic("remap: Gauss rule eigenproblem failed")
	}
	vals := es.Values(nil)
	var vec mat.Dense
	es.VectorsTo(&vec)
	mu0 := math.Pow(2, beta+1) / (beta + 1)
	x = make([]float64, n)
	w = make([]float64, n)
	scale := math.Pow(2, beta+1) // ∫_{−1}^{1}(1+x)^b g dx = 2^(b+1) ∫_0^1 s^b g ds
	for k := 0; k < n; k++ {
		v := vec.At(0, k)
		x[k] = (1 + vals[k]) / 2
		w[k] = mu0 * v * v / scale
	}
	return x, w
}

// momentIntegrator integrates the monomials of one frame over polygons. It is not safe
// for concurrent use.
type momentIntegrator struct {
	r          *quadRule
	g          []vec2
	nx, ny, nw []float64 // the nodes of the last polygon
}

type vec2 struct{ x, y float64 }

func newMomentIntegrator(r *quadRule) *momentIntegrator {
	return &momentIntegrator{r: r}
}

// integrate adds ∫_poly X^i Y^j dA (unit-sphere or plane area), in the monomial order
// above, to out (length numMonomials(p)). The polygon is counter-clockwise; its edges are
// great arcs (straight in the gnomonic plane, or straight segments on the plane) or, when
// D ≠ 0, arcs of the small circle M·x = D. The integral is the sum over edges of the
// region swept from the first vertex: triangles for straight edges (those through the
// first vertex sweep nothing), curved-side triangles for small-circle arcs, so any simple
// polygon is handled, convex or not (the swept regions add up with the winding number).
//
// Error: straight-sided parts are exact for polynomials of degree 7 (p ≤ 3); the gnomonic
// Jacobian is analytic, so the relative error of a region of size h is O(h⁸). On a
// curved side the integrand is analytic in the arc angle θ, with singularities only where
// x·c = 0, at least ~1 rad away in the complex θ plane for any cell smaller than a
// hemisphere, so m-point Gauss–Legendre over a span Θ converges like Θ^(2m). The
// parametrisation is exact (no subdivision, no chord approximation); with m = 4 arc
// points the measured error of a curved segment against its exact area
// (sphere.SegmentArea) is ≤ 1.4e-13 of Θ² cos φ (the area of a Θ × Θ cell there) for
// spans up to 10° at any latitude, at the rounding of the reference, so whole 2° lat–lon
// cells come out within 1e-13 of R²Δλ(sin φ₂ − sin φ₁) (TestQuadratureArcSegments,
// TestQuadratureCellAreas).
func (mi *momentIntegrator) integrate(f *localFrame, poly []PolyVertex, out []float64) {
	mi.collect(f, poly)
	monomialSums(mi.r.p, f.inv, mi.nx, mi.ny, mi.nw, out)
}

// monomialSums adds Σ w·X^i Y^j (X = x·inv, Y = y·inv) over the nodes to out.
func monomialSums(p int, inv float64, xs, ys, ws []float64, out []float64) {
	ys = ys[:len(xs)]
	ws = ws[:len(xs)]
	switch p {
	case 2:
		var s [6]float64
		for i, x := range xs {
			X, Y, w := x*inv, ys[i]*inv, ws[i]
			wX, wY := w*X, w*Y
			s[0] += w
			s[1] += wX
			s[2] += wY
			s[3] += wX * X
			s[4] += wX * Y
			s[5] += wY * Y
		}
		for k := range s {
			out[k] += s[k]
		}
	case 3:
		var s [10]float64
		for i, x := range xs {
			X, Y, w := x*inv, ys[i]*inv, ws[i]
			wX, wY := w*X, w*Y
			wXX, wXY, wYY := wX*X, wX*Y, wY*Y
			s[0] += w
			s[1] += wX
			s[2] += wY
			s[3] += wXX
			s[4] += wXY
			s[5] += wYY
			s[6] += wXX * X
			s[7] += wXX * Y
			s[8] += wXY * Y
			s[9] += wYY * Y
		}
		for k := range s {
			out[k] += s[k]
		}
	default:
		var xp, yp [8]float64
		for i, x := range xs {
			X, Y, w := x*inv, ys[i]*inv, ws[i]
			xp[0], yp[0] = 1, 1
			for k := 1; k <= p; k++ {
				xp[k] = xp[k-1] * X
				yp[k] = yp[k-1] * Y
			}
			k := 0
			for d := 0; d <= p; d++ {
				for j := 0; j <= d; j++ {
					out[k] += w * xp[d-j] * yp[j]
					k++
				}
			}
		}
	}
}

// nodes calls visit with every quadrature node (ξ, η) of poly in frame f and its weight
// w, the Jacobian of the gnomonic projection included: Σ w·g(ξ, η) ≈ ∫_poly g dA.
func (mi *momentIntegrator) nodes(f *localFrame, poly []PolyVertex, visit func(x, y, w float64)) {
	mi.collect(f, poly)
	for i, x := range mi.nx {
		visit(x, mi.ny[i], mi.nw[i])
	}
}

// collect leaves the quadrature nodes of poly in mi.nx, mi.ny, mi.nw.
func (mi *momentIntegrator) collect(f *localFrame, poly []PolyVertex) {
	nx, ny, nw := mi.nx[:0], mi.ny[:0], mi.nw[:0]
	defer func() { mi.nx, mi.ny, mi.nw = nx, ny, nw }()
	n := len(poly)
	if n < 3 {
		return
	}
	mi.g = mi.g[:0]
	for _, v := range poly {
		x, y := f.project(v.P)
		mi.g = append(mi.g, vec2{x, y})
	}
	g := mi.g
	v0 := g[0]
	tri := mi.r.tri
	for i := 0; i < n; i++ {
		j := i + 1
		if j == n {
			j = 0
		}
		if f.sphere && poly[i].D != 0 {
			mi.nx, mi.ny, mi.nw = nx, ny, nw
			mi.arc(f, v0, poly[i].P, poly[j].P, poly[i].M, poly[i].D)
			nx, ny, nw = mi.nx, mi.ny, mi.nw
			continue
		}
		if i == 0 || j == 0 {
			continue // a straight edge through the apex sweeps no area
		}
		a, b := g[i], g[j]
		ax, ay := a.x-v0.x, a.y-v0.y
		bx, by := b.x-v0.x, b.y-v0.y
		twoA := ax*by - ay*bx
		if twoA == 0 {
			continue
		}
		for _, q := range tri {
			x := v0.x + q.l1*ax + q.l2*bx
			y := v0.y + q.l1*ay + q.l2*by
			w := q.w * twoA
			if f.sphere {
				r := 1 + x*x + y*y
				w /= r * math.Sqrt(r)
			}
			nx = append(nx, x)
			ny = append(ny, y)
			nw = append(nw, w)
		}
	}
}

// jacobian returns the area element of the frame at (ξ, η): (1 + ξ² + η²)^(−3/2) on the
// sphere, 1 on the plane.
func jacobian(f *localFrame, x, y float64) float64 {
	if !f.sphere {
		return 1
	}
	q := 1 + x*x + y*y
	return 1 / (q * math.Sqrt(q))
}

// arc appends the nodes of the region swept from v0 along the small-circle arc a → b of
// M·x = D.
func (mi *momentIntegrator) arc(f *localFrame, v0 vec2, a, b, m r3.Vec, d float64) {
	span := sphere.CircleSpan(a, b, m, d)
	if span == 0 {
		return
	}
	u := r3.Sub(a, r3.Scale(d, m))
	w := r3.Cross(m, u)
	dm := r3.Scale(d, m)
	for k, tk := range mi.r.arcX {
		th := tk * span
		sn, cs := math.Sincos(th)
		x := r3.Add(dm, r3.Add(r3.Scale(cs, u), r3.Scale(sn, w)))
		dx := r3.Add(r3.Scale(-sn, u), r3.Scale(cs, w)) // dx/dθ = m × x
		q := r3.Dot(x, f.c)
		gx, gy := r3.Dot(x, f.e1)/q, r3.Dot(x, f.e2)/q
		dq := r3.Dot(dx, f.c)
		gpx := (r3.Dot(dx, f.e1) - gx*dq) / q
		gpy := (r3.Dot(dx, f.e2) - gy*dq) / q
		rx, ry := gx-v0.x, gy-v0.y
		jac := (rx*gpy - ry*gpx) * span * mi.r.arcW[k]
		for i, s := range mi.r.sx {
			x, y := v0.x+s*rx, v0.y+s*ry
			mi.nx = append(mi.nx, x)
			mi.ny = append(mi.ny, y)
			mi.nw = append(mi.nw, jacobian(f, x, y)*jac*mi.r.sw[i])
		}
	}
}

// unproject returns the point of the surface with frame coordinates (ξ, η).
func (f *localFrame) unproject(x, y float64) r3.Vec {
	if f.sphere {
		return r3.Unit(r3.Add(f.c, r3.Add(r3.Scale(x, f.e1), r3.Scale(y, f.e2))))
	}
	return r3.Vec{X: f.c.X + x, Y: f.c.Y + y}
}

// cellPolygon appends cell c of m as a polygon with the circle of each edge; on the
// plane its points are shifted next to ref (minimum image of its first vertex).
func cellPolygon(m *grids.Mesh, c int, ref r3.Vec, dst []PolyVertex) []PolyVertex {
	var buf [16]r3.Vec
	vs := m.CellPoints(c, buf[:0])
	var shift r3.Vec
	if m.Surface == grids.Plane {
		shift = r3.Sub(m.Unwrap(vs[0], ref), vs[0])
	}
	n := len(vs)
	for k, v := range vs {
		pv := PolyVertex{P: r3.Add(v, shift)}
		if m.Surface == grids.Sphere && m.Kind(int(m.CellEdges[int(m.CellStart[c])+k])) == grids.Parallel {
			pv.M, pv.D = sphere.ParallelCircle(v, vs[(k+1)%n])
		}
		dst = append(dst, pv)
	}
	return dst
}
