package remap

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

// feGaussPoints is the number of Gauss–Legendre points per direction of the collapsed
// (Duffy) product rule on each cone of a piece: 25 points, exact for polynomials of degree
// 2·5 − 2 = 8 in the local coordinates, which covers the Q2 basis (degree 4) on
// parallelograms with margin. On the sphere the integrand also carries the gnomonic area
// factor (1 + X² + Y²)^(−3/2), and on non-parallelogram quadrilaterals the basis is not
// polynomial in X, Y; TestFEQuadratureResidue measures what that costs.
const feGaussPoints = 5

// feRule holds the collapsed Gauss rule on the unit square: s, τ and the weight w·s.
type feRule struct{ s, tau, w []float64 }

func newFERule(n int) feRule {
	x := make([]float64, n)
	w := make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, 0, 1)
	r := feRule{}
	for i := range n {
		for j := range n {
			r.s = append(r.s, x[i])
			r.tau = append(r.tau, x[j])
			r.w = append(r.w, w[i]*w[j]*x[i])
		}
	}
	return r
}

// feFrame is the local frame of one source cell: gnomonic coordinates on the tangent
// plane at the cell centroid (sphere; great arcs map to straight segments), or plane
// coordinates relative to the cell's first vertex (plane; the frame overlap pieces come
// in).
type feFrame struct {
	sphere bool
	o      r3.Vec // tangent point (sphere) or origin (plane)
	e1, e2 r3.Vec // tangent basis with e1 × e2 = o (sphere)
}

func newFEFrame(m *grids.Mesh, c int) feFrame {
	if m.Surface != grids.Sphere {
		return feFrame{o: m.Verts[m.CellVerts[m.CellStart[c]]]}
	}
	o := m.CellCentroid[c]
	e1 := r3.Unit(r3.Cross(o, anyPerp(o)))
	return feFrame{sphere: true, o: o, e1: e1, e2: r3.Cross(o, e1)}
}

// local returns the frame coordinates of p (a unit vector in the front hemisphere of o,
// or a plane point in the frame's period image).
func (f *feFrame) local(p r3.Vec) (x, y float64) {
	if !f.sphere {
		return p.X - f.o.X, p.Y - f.o.Y
	}
	q := r3.Sub(r3.Scale(1/r3.Dot(p, f.o), p), f.o)
	return r3.Dot(q, f.e1), r3.Dot(q, f.e2)
}

// point returns the surface point with frame coordinates (x, y).
func (f *feFrame) point(x, y float64) r3.Vec {
	if !f.sphere {
		return r3.Vec{X: f.o.X + x, Y: f.o.Y + y}
	}
	return sphere.Normalize(r3.Add(f.o, r3.Add(r3.Scale(x, f.e1), r3.Scale(y, f.e2))))
}

// feBasis is the local basis of one source cell: n functions φ_i(z) = Σ_j coef[j·n+i]
// mono_j(z), z = (X, Y)/h on triangles, z = (ξ, η) (the reference coordinates of the
// bilinear map of the corners) on quadrilaterals.
type feBasis struct {
	frame   feFrame
	quad    bool
	n       int
	h       float64       // triangle coordinate scale
	corners [4][2]float64 // quadrilateral corners in frame coordinates
	coef    []float64
	dofs    []int32
}

// monomials writes the n monomials at z into dst: P1 {1, a, b}, P2 {…, a², ab, b²},
// Q1 {1, a, b, ab}, Q2 {…, a², b², a²b, ab², a²b²}.
func monomials(dst []float64, quadCell bool, n int, a, b float64) {
	dst[0], dst[1], dst[2] = 1, a, b
	switch {
	case !quadCell && n == 6:
		dst[3], dst[4], dst[5] = a*a, a*b, b*b
	case quadCell && n >= 4:
		dst[3] = a * b
		if n == 9 {
			dst[4], dst[5], dst[6], dst[7], dst[8] = a*a, b*b, a*a*b, a*b*b, a*a*b*b
		}
	}
}

// param returns the basis parameter z of frame coordinates (x, y).
func (b *feBasis) param(x, y float64) (float64, float64) {
	if b.quad {
		return invBilinear(&b.corners, x, y)
	}
	return x / b.h, y / b.h
}

// eval writes φ_i at frame coordinates (x, y) into out (length n), using mono as scratch.
func (b *feBasis) eval(out, mono []float64, x, y float64) {
	za, zb := b.param(x, y)
	monomials(mono, b.quad, b.n, za, zb)
	for i := range b.n {
		s := 0.0
		for j := range b.n {
			s += b.coef[j*b.n+i] * mono[j]
		}
		out[i] = s
	}
}

// invBilinear returns the reference coordinates (ξ, η) ∈ [0,1]² (for points inside) of
// (x, y) under the bilinear map of the corners c0..c3 (counter-clockwise, reference
// (0,0), (1,0), (1,1), (0,1)), by Newton's method from the affine guess. For convex
// quadrilaterals it converges in a few steps to rounding; for parallelograms the first
// step is exact.
func invBilinear(c *[4][2]float64, x, y float64) (float64, float64) {
	bx, by := c[1][0]-c[0][0], c[1][1]-c[0][1]
	dx, dy := c[3][0]-c[0][0], c[3][1]-c[0][1]
	ex, ey := c[0][0]-c[1][0]+c[2][0]-c[3][0], c[0][1]-c[1][1]+c[2][1]-c[3][1]
	px, py := x-c[0][0], y-c[0][1]
	det := bx*dy - by*dx
	xi := (px*dy - py*dx) / det
	eta := (bx*py - by*px) / det
	for it := 0; it < 30; it++ {
		rx := xi*bx + eta*dx + xi*eta*ex - px
		ry := xi*by + eta*dy + xi*eta*ey - py
		j11, j12 := bx+eta*ex, dx+xi*ex
		j21, j22 := by+eta*ey, dy+xi*ey
		jd := j11*j22 - j12*j21
		dxi := (rx*j22 - ry*j12) / jd
		deta := (j11*ry - j21*rx) / jd
		xi -= dxi
		eta -= deta
		if math.Abs(dxi)+math.Abs(deta) < 1e-15 {
			break
		}
	}
	return xi, eta
}

// newFEBasis builds the basis of cell c for space (grids.DG1 or grids.CG2); quadIndex[c]
// is the cell's rank among quadrilaterals (CG2 centre DOFs).
func newFEBasis(m *grids.Mesh, c int, space grids.HLocation, quadIndex []int32) (*feBasis, error) {
	lo, hi := int(m.CellStart[c]), int(m.CellStart[c+1])
	deg := hi - lo
	if deg != 3 && deg != 4 {
		return nil, fmt.Errorf("%w: %v needs triangles or quadrilaterals; cell %d of %q has %d vertices", ErrBadOptions, space, c, m.Name, deg)
	}
	b := &feBasis{frame: newFEFrame(m, c), quad: deg == 4}
	var buf [4]r3.Vec
	vs := m.CellPoints(c, buf[:0])
	var cx, cy [4]float64
	for k, v := range vs {
		cx[k], cy[k] = b.frame.local(v)
	}
	b.h = math.Sqrt(m.CellArea[c]) / m.Scale()
	for k := range deg {
		b.corners[k] = [2]float64{cx[k], cy[k]}
	}
	// Nodes in frame coordinates, and DOF numbers.
	type node struct {
		x, y  float64
		fixed bool // parameter given exactly (quadrilateral reference nodes)
		za    float64
		zb    float64
	}
	var nodes []node
	ref := [4][2]float64{{0, 0}, {1, 0}, {1, 1}, {0, 1}}
	for k := range deg {
		nd := node{x: cx[k], y: cy[k]}
		if b.quad {
			nd.fixed, nd.za, nd.zb = true, ref[k][0], ref[k][1]
		}
		nodes = append(nodes, nd)
	}
	nv, ne := int32(m.NumVerts()), int32(m.NumEdges())
	switch space {
	case grids.DG1:
		for h := lo; h < hi; h++ {
			b.dofs = append(b.dofs, int32(h))
		}
	case grids.CG2:
		b.dofs = append(b.dofs, m.CellVerts[lo:hi]...)
		for k := range deg {
			e := m.CellEdges[lo+k]
			p := m.EdgeMid[e]
			if !b.frame.sphere {
				p = m.Unwrap(p, b.frame.o)
			}
			x, y := b.frame.local(p)
			nodes = append(nodes, node{x: x, y: y})
			b.dofs = append(b.dofs, nv+e)
		}
		if b.quad {
			nodes = append(nodes, node{fixed: true, za: 0.5, zb: 0.5})
			b.dofs = append(b.dofs, nv+ne+quadIndex[c])
		}
	default:
		return nil, fmt.Errorf("%w: %v is not a finite-element space (want dg1 or cg2)", ErrBadOptions, space)
	}
	n := len(nodes)
	b.n = n
	v := mat.NewDense(n, n, nil)
	mono := make([]float64, n)
	for q, nd := range nodes {
		za, zb := nd.za, nd.zb
		if !nd.fixed {
			za, zb = b.param(nd.x, nd.y)
		}
		monomials(mono, b.quad, n, za, zb)
		v.SetRow(q, mono)
	}
	var inv mat.Dense
	if err := inv.Inverse(v); err != nil {
		return nil, fmt.Errorf("%v basis of cell %d of %q: the nodes are degenerate (%v)", space, c, m.Name, err)
	}
	b.coef = make([]float64, n*n)
	for j := range n {
		for i := range n {
			b.coef[j*n+i] = inv.At(j, i)
		}
	}
	return b, nil
}

// feScratch holds the buffers of one quadrature call.
type feScratch struct {
	phi  []float64
	mono []float64
	acc  []float64 // per-basis integrals of the current cone
}

func newFEScratch() *feScratch {
	return &feScratch{phi: make([]float64, 9), mono: make([]float64, 9), acc: make([]float64, 9)}
}

// integrate adds ∫_piece φ_i dA to out[i] (unit sphere or plane units) for the polygon
// poly (an overlap piece, or a whole cell) in the cell's frame, and returns the piece's
// area.
//
// The piece is the signed sum of the cones from its first vertex P0 over its edges: a
// flat triangle (P0, P_k, P_{k+1}) for a straight edge (a great arc is straight in the
// gnomonic plane), and for a small-circle edge the curved cone
// {P0 + s(γ(θ) − P0)}, γ the gnomonic image of the arc, integrated in (s, θ) with
// Jacobian s·|(γ − P0) × γ'| — exact geometry, no chords (the cone over an edge that
// starts at P0 is the segment between the arc and its chord). Each cone's weights are
// rescaled to its exact area (geodesic triangle plus small-circle segment on the
// sphere), so Σ_i ∫ φ_i = area to rounding (Σ_i φ_i = 1 pointwise).
func (b *feBasis) integrate(out []float64, poly []PolyVertex, r *feRule, sc *feScratch) float64 {
	n := len(poly)
	x0, y0 := b.frame.local(poly[0].P)
	acc := sc.acc[:b.n]
	area := 0.0
	for k := 0; k < n; k++ {
		pa, pb := poly[k], poly[(k+1)%n]
		curved := b.frame.sphere && pa.D != 0
		if !curved && (k == 0 || k == n-1) {
			continue // a straight edge through the apex: an empty cone
		}
		clear(acc)
		wsum := 0.0
		add := func(x, y, w float64) {
			if b.frame.sphere {
				g := 1 + x*x + y*y
				w /= g * math.Sqrt(g)
			}
			b.eval(sc.phi, sc.mono, x, y)
			for i := range b.n {
				acc[i] += w * sc.phi[i]
			}
			wsum += w
		}
		exact := 0.0
		if !curved {
			xa, ya := b.frame.local(pa.P)
			xb, yb := b.frame.local(pb.P)
			ax, ay := xa-x0, ya-y0
			bx, by := xb-x0, yb-y0
			twoA := ax*by - ay*bx
			if twoA == 0 {
				continue
			}
			for q := range r.w {
				s, tau := r.s[q], r.tau[q]
				add(x0+s*((1-tau)*ax+tau*bx), y0+s*((1-tau)*ay+tau*by), r.w[q]*twoA)
			}
			if b.frame.sphere {
				exact = sphere.TriangleArea(poly[0].P, pa.P, pb.P)
			} else {
				exact = twoA / 2
			}
		} else {
			span := sphere.CircleSpan(pa.P, pb.P, pa.M, pa.D)
			c0 := r3.Scale(pa.D, pa.M)
			u := r3.Sub(pa.P, c0)
			t := r3.Cross(pa.M, u)
			for q := range r.w {
				s, tau := r.s[q], r.tau[q]
				sn, cs := math.Sincos(tau * span)
				p := r3.Add(c0, r3.Add(r3.Scale(cs, u), r3.Scale(sn, t)))
				dp := r3.Add(r3.Scale(-sn, u), r3.Scale(cs, t)) // dp/dθ
				// Gnomonic image G = p/(p·o) − o and its derivative along the arc.
				po := r3.Dot(p, b.frame.o)
				dg := r3.Sub(r3.Scale(1/po, dp), r3.Scale(r3.Dot(dp, b.frame.o)/(po*po), p))
				gx, gy := b.frame.local(p)
				dgx, dgy := r3.Dot(dg, b.frame.e1), r3.Dot(dg, b.frame.e2)
				jac := (gx-x0)*dgy - (gy-y0)*dgx
				add(x0+s*(gx-x0), y0+s*(gy-y0), r.w[q]*jac*span)
			}
			exact = sphere.TriangleArea(poly[0].P, pa.P, pb.P) + sphere.SegmentArea(pa.P, pb.P, pa.M, pa.D)
		}
		scale := 1.0
		if wsum != 0 {
			scale = exact / wsum
		}
		for i := range b.n {
			out[i] += scale * acc[i]
		}
		area += exact
	}
	return area
}
