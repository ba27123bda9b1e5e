package remap

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
)

// reconstructor fits, on every cell s of a mesh, a polynomial of degree p in the
// variables X, Y of the cell's localFrame to cell means:
//
//	f_s(X, Y) = f̄_s + Σ_α a_α (φ_α − φ̄_α,s),   a_α = Σ_k C_αk (f̄_k − f̄_s),
//
// α running over the non-constant monomials φ_α = X^i Y^j (1 ≤ i + j ≤ p), φ̄_α,s their
// means over s, and k over the cells of s's patch. Subtracting the cell means makes the
// mean of f_s over s equal f̄_s for any coefficients (the mean-preserving basis), so the
// fit only chooses a_α: the weighted least-squares solution of
//
//	Σ_α a_α (φ̄_α,k − φ̄_α,s) ≈ f̄_k − f̄_s   for every k in the patch,
//
// rows weighted by 1/r_k (r_k the distance of k's mean position from s's, in units of h;
// inverse-distance weighting, common practice in least-squares reconstruction, e.g.
// Ollivier-Gooch & Van Altena 2002, J. Comput. Phys. 181:729–752, from memory). The
// means φ̄_α,k and φ̄_α,s are integrated over the whole cells in s's frame with the
// quadrature of momentIntegrator. The solution is a fixed matrix C times the patch means,
// so the map stays linear. Polynomials of degree ≤ p whose cell means are given exactly
// are reproduced exactly: to rounding on the plane (TestReconstructionPolynomials), to
// the quadrature error on the sphere.
//
// The patch grows ring by ring (ring 1: the cells sharing a vertex with s; ring r + 1:
// the unseen cells sharing a vertex with ring r) until it has at least patchFactor
// times as many cells as unknowns and the scaled least-squares matrix is well
// conditioned (min|R_jj|/max|R_jj| of its QR factors ≥ condCut), or maxRings rings are
// used; a ring passes through a hub vertex (a lat–lon pole) only to the cells next to
// the current one (see hubValence). An ill-conditioned fit has large weights of both
// signs: a fit of the pole cells from the whole polar row (all on one circle, where
// X² + Y² is nearly constant) had row sums of |W| up to ~240 and a 1.5e-13 conservation
// defect; the rules above keep the largest row sum of |W| near 2 on the test meshes.
type reconstructor struct {
	m      *grids.Mesh
	p, nu  int // degree, non-constant monomials
	frames []localFrame
	rule   *quadRule
	on     func(int) bool
	need   int
}

// patchFactor: how many patch cells per unknown are needed before the fit is tried. With
// 1.5, degree 2 (5 unknowns) uses the 8 vertex neighbours of a quadrilateral or the 12 of
// a triangle alone, and two rings around hexagons (6 neighbours would make the fit
// nearly an interpolation, which amplifies noise); degree 3 (9 unknowns) uses two rings
// on these meshes. Common practice: about 1.5–2 times as many cells as unknowns.
const patchFactor = 1.5

// condCut: the smallest acceptable min|R_jj|/max|R_jj| of the column-scaled, weighted
// least-squares matrix before another ring is added. Measured: every cell of the cubed
// sphere (N = 24, 96) and of the icosahedral meshes (level 4, primal and dual) meets it
// with the rings patchFactor asks for; for degree 3 on the 2° lat–lon grid 440 of 16,200
// cells next to the poles take a third ring and 176 stay below 1e-2 with it (their
// weights stay bounded: the largest row sum of |W| is 2.2).
const condCut = 1e-2

// hubValence: a vertex shared by more cells than this (the pole of a lat–lon grid, where
// all nlon pole cells meet) is a hub; a ring grows through it only to the two cells next
// to the current one around it, as if the hub were split. Without this the pole cells'
// first ring would be the whole polar row: hundreds of cells on one circle, an
// ill-conditioned fit (X² + Y² is nearly constant on a circle) and a patch whose size,
// and cost, grows with nlon. Ordinary meshes have at most 6 to 8 cells per vertex.
const hubValence = 12

// maxRings bounds the patch growth.
const maxRings = 3

// svdCut is the relative singular value below which a direction of the scaled
// least-squares problem is treated as undetermined: far below condCut, far above rounding
// (1e-16 × condition). Only degenerate patches (cells on one line, a tiny mesh) reach it;
// they get the minimum-norm solution, a bounded reconstruction of the terms they
// determine.
const svdCut = 1e-10

// newReconstructor prepares the reconstructions of degree p on the cells of m for which
// on is true (only those cells enter patches).
func newReconstructor(m *grids.Mesh, p int, on func(int) bool, workers int) *reconstructor {
	nc := m.NumCells()
	nm := numMonomials(p)
	r := &reconstructor{m: m, p: p, nu: nm - 1, frames: make([]localFrame, nc), rule: newQuadRule(p), on: on}
	r.need = int(math.Ceil(patchFactor * float64(r.nu)))
	par.For(nc, workers, 2048, func(lo, hi int) {
		for c := lo; c < hi; c++ {
			r.frames[c] = newLocalFrame(m, c)
		}
	})
	return r
}

// cellFitter fits reconstructions one cell at a time; it is not safe for concurrent
// use.
type cellFitter struct {
	r     *reconstructor
	mi    *momentIntegrator
	mom   []float64
	mean  []float64
	poly  []PolyVertex
	front []int32
	stamp map[int32]struct{} // cells seen
	vseen map[int32]struct{} // vertices whose cells have been listed
	keep  []int32
	rows  []float64
	wts   []float64
	idx   []int
	nb    []int32
	c     []float64
	lsq   lsqScratch
}

func (r *reconstructor) newFitter() *cellFitter {
	nm := r.nu + 1
	return &cellFitter{r: r, mi: newMomentIntegrator(r.rule), mom: make([]float64, nm), mean: make([]float64, r.nu),
		stamp: make(map[int32]struct{}), vseen: make(map[int32]struct{})}
}

// fit returns the patch of s (increasing cell order), its operator C (nu × len(patch),
// row-major) and the means φ̄_α,s. The slices are valid until the next call.
func (ft *cellFitter) fit(s int) (nb []int32, c, mean []float64) {
	r := ft.r
	m, nu := r.m, r.nu
	f := &r.frames[s]
	ref := m.Verts[m.CellVerts[m.CellStart[s]]]
	clear(ft.mom)
	ft.poly = cellPolygon(m, s, ref, ft.poly[:0])
	ft.mi.integrate(f, ft.poly, ft.mom)
	for a := range ft.mean {
		ft.mean[a] = ft.mom[a+1] / ft.mom[0]
	}
	clear(ft.stamp)
	clear(ft.vseen)
	ft.stamp[int32(s)] = struct{}{}
	ft.front = append(ft.front[:0], int32(s))
	ft.keep, ft.rows, ft.wts = ft.keep[:0], ft.rows[:0], ft.wts[:0]
	var next []int32
	for ring := 1; ring <= maxRings; ring++ {
		// Next ring: the unseen cells sharing a vertex with the current front.
		next = next[:0]
		for _, k := range ft.front {
			for _, v := range m.CellVertices(int(k)) {
				around := m.VertexCells(int(v))
				if len(around) > hubValence {
					// A hub: only the cells next to k around it.
					i := slices.Index(around, k)
					for _, j := range [2]int32{around[(i+1)%len(around)], around[(i+len(around)-1)%len(around)]} {
						if _, seen := ft.stamp[j]; !seen {
							ft.stamp[j] = struct{}{}
							next = append(next, j)
						}
					}
					continue
				}
				if _, seen := ft.vseen[v]; seen {
					continue
				}
				ft.vseen[v] = struct{}{}
				for _, j := range around {
					if _, seen := ft.stamp[j]; seen {
						continue
					}
					ft.stamp[j] = struct{}{}
					next = append(next, j)
				}
			}
		}
		sortInt32(next)
		ft.front, next = next, ft.front
		for _, k := range ft.front {
			if !r.on(int(k)) {
				continue
			}
			ft.poly = cellPolygon(m, int(k), ref, ft.poly[:0])
			if f.sphere && !inHemisphere(f, ft.poly) {
				continue
			}
			clear(ft.mom)
			ft.mi.integrate(f, ft.poly, ft.mom)
			if !(ft.mom[0] > 0) {
				continue
			}
			for a := 0; a < nu; a++ {
				ft.rows = append(ft.rows, ft.mom[a+1]/ft.mom[0]-ft.mean[a])
			}
			d := math.Hypot(ft.rows[len(ft.rows)-nu], ft.rows[len(ft.rows)-nu+1])
			ft.wts = append(ft.wts, 1/math.Max(d, 1e-3))
			ft.keep = append(ft.keep, k)
		}
		more := len(ft.front) > 0 && ring < maxRings
		if len(ft.keep) < r.need && more {
			continue
		}
		if len(ft.keep) == 0 {
			return nil, nil, ft.mean
		}
		var quality float64
		c, quality = lsqOperator(&ft.lsq, ft.rows, ft.wts, len(ft.keep), nu)
		if quality >= condCut || !more {
			break
		}
	}
	// The patch in increasing cell order, C's columns with it.
	nk := len(ft.keep)
	ft.idx = ft.idx[:0]
	for i := 0; i < nk; i++ {
		ft.idx = append(ft.idx, i)
	}
	slices.SortFunc(ft.idx, func(a, b int) int { return int(ft.keep[a]) - int(ft.keep[b]) })
	ft.nb = ft.nb[:0]
	ft.c = append(ft.c[:0], c...)
	for i, j := range ft.idx {
		ft.nb = append(ft.nb, ft.keep[j])
		for a := 0; a < nu; a++ {
			ft.c[a*nk+i] = c[a*nk+j]
		}
	}
	return ft.nb, ft.c, ft.mean
}

// inHemisphere reports whether every vertex of poly is close enough to the frame's centre
// for the gnomonic projection (cos ≥ minGnomonicCos).
func inHemisphere(f *localFrame, poly []PolyVertex) bool {
	for _, v := range poly {
		if r3.Dot(v.P, f.c) < minGnomonicCos {
			return false
		}
	}
	return true
}

// lsqOperator returns C (nu × nk, row-major) with a = C·(f_k − f_s) the weighted
// least-squares solution of A a ≈ f_k − f_s, A the nk × nu row-major matrix rows and w the
// row weights: C = D (WAD)⁺ W, D scaling the columns of WA to unit length. The
// pseudo-inverse comes from a Householder QR factorisation (Golub & Van Loan, Matrix
// Computations, §5.2–5.3, from memory); when R has a diagonal entry below svdCut times
// the largest (a patch that does not determine every term), from the truncated SVD
// (gonum mat.SVD) instead. The second result is min|R_jj|/max|R_jj| (0 after the SVD
// fallback).
// The result is in sc and valid until the next call with sc (nil allocates).
func lsqOperator(sc *lsqScratch, rows, w []float64, nk, nu int) ([]float64, float64) {
	if sc == nil {
		sc = new(lsqScratch)
	}
	// Column-major copy of WA, columns scaled to unit length.
	a := growZeroed(&sc.a, nk*nu)
	colScale := growZeroed(&sc.colScale, nu)
	for j := 0; j < nu; j++ {
		col := a[j*nk : (j+1)*nk]
		n := 0.0
		for i := 0; i < nk; i++ {
			col[i] = w[i] * rows[i*nu+j]
			n += col[i] * col[i]
		}
		if n > 0 {
			colScale[j] = 1 / math.Sqrt(n)
		}
		for i := range col {
			col[i] *= colScale[j]
		}
	}
	c := growZeroed(&sc.c, nu*nk)
	if nk >= nu {
		if q := qrPinv(sc, a, nk, nu, w, c); q > svdCut {
			for j := 0; j < nu; j++ {
				for i := 0; i < nk; i++ {
					c[j*nk+i] *= colScale[j]
				}
			}
			return c, q
		}
	}
	clear(c)
	svdPinv(a, nk, nu, w, colScale, c)
	return c, 0
}

// lsqScratch holds the work arrays of lsqOperator.
type lsqScratch struct{ a, colScale, c, beta, rdiag, q []float64 }

// grow returns (*buf)[:n], zeroed, reallocating when too short.
func growZeroed(buf *[]float64, n int) []float64 {
	if cap(*buf) < n {
		*buf = make([]float64, n)
	}
	*buf = (*buf)[:n]
	clear(*buf)
	return *buf
}

// qrPinv sets c (nu × nk) to R⁻¹Q₁ᵀ diag(w) for the column-major nk × nu matrix a
// (overwritten) and returns min|R_jj|/max|R_jj|, a cheap estimate of the inverse
// condition number (0 when R is singular to within svdCut, and c is then unset).
func qrPinv(sc *lsqScratch, a []float64, nk, nu int, w, c []float64) float64 {
	beta := growZeroed(&sc.beta, nu)
	rdiag := growZeroed(&sc.rdiag, nu)
	for j := 0; j < nu; j++ {
		col := a[j*nk : (j+1)*nk]
		// Householder vector v = x − αe_j over rows j..nk−1, stored in place.
		norm := 0.0
		for i := j; i < nk; i++ {
			norm += col[i] * col[i] // columns have unit length: no overflow
		}
		norm = math.Sqrt(norm)
		if norm == 0 {
			return 0
		}
		alpha := -math.Copysign(norm, col[j])
		col[j] -= alpha
		vv := 0.0
		for i := j; i < nk; i++ {
			vv += col[i] * col[i]
		}
		beta[j] = 2 / vv
		rdiag[j] = alpha
		for k := j + 1; k < nu; k++ {
			ck := a[k*nk : (k+1)*nk]
			dot := 0.0
			for i := j; i < nk; i++ {
				dot += col[i] * ck[i]
			}
			dot *= beta[j]
			for i := j; i < nk; i++ {
				ck[i] -= dot * col[i]
			}
		}
	}
	maxR, minR := 0.0, math.Inf(1)
	for _, r := range rdiag {
		maxR = math.Max(maxR, math.Abs(r))
		minR = math.Min(minR, math.Abs(r))
	}
	if !(minR > svdCut*maxR) {
		return 0
	}
	// Q₁ = H_0 ⋯ H_{nu−1} [I; 0], column j from e_j (H_k with k > j leave it alone),
	// then column i of C is R⁻¹ times row i of Q₁, times w_i.
	q := growZeroed(&sc.q, nk*nu)
	for j := 0; j < nu; j++ {
		y := q[j*nk : (j+1)*nk]
		y[j] = 1
		for k := j; k >= 0; k-- {
			col := a[k*nk : (k+1)*nk]
			dot := 0.0
			for r := k; r < nk; r++ {
				dot += col[r] * y[r]
			}
			dot *= beta[k]
			for r := k; r < nk; r++ {
				y[r] -= dot * col[r]
			}
		}
	}
	for i := 0; i < nk; i++ {
		for j := nu - 1; j >= 0; j-- {
			v := q[j*nk+i] * w[i]
			for k := j + 1; k < nu; k++ {
				v -= a[k*nk+j] * c[k*nk+i]
			}
			c[j*nk+i] = v / rdiag[j]
		}
	}
	return minR / maxR
}

// svdPinv sets c (nu × nk) to D V Σ⁺ Uᵀ diag(w) for the column-major nk × nu matrix a,
// dropping singular values below svdCut times the largest (a minimum-norm solution).
func svdPinv(a []float64, nk, nu int, w, colScale, c []float64) {
	m := mat.NewDense(nk, nu, nil)
	for j := 0; j < nu; j++ {
		for i := 0; i < nk; i++ {
			m.Set(i, j, a[j*nk+i])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(m, mat.SVDThin) {
		return // no fit: first order on this cell
	}
	sv := svd.Values(nil)
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	for r := range sv {
		if !(sv[r] > svdCut*sv[0]) {
			break
		}
		inv := 1 / sv[r]
		for j := 0; j < nu; j++ {
			vj := v.At(j, r) * inv * colScale[j]
			if vj == 0 {
				continue
			}
			for i := 0; i < nk; i++ {
				c[j*nk+i] += vj * u.At(i, r) * w[i]
			}
		}
	}
}
