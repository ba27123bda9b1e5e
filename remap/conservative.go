package remap

import (
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// coveredShare is the coverage above which a cell counts as fully covered: overlaps sum to
// cell areas within ~1e-14 (see ComputeOverlaps), so anything closer to 1 than this is
// full coverage up to rounding.
const coveredShare = 1 - 1e-12

// buildConservative builds first- and second-order conservative maps (Jones 1999).
//
// Order 1: W_ts = |s ∩ t| / |t| (or / covered part of t).
//
// Order 2: on each source cell the field is reconstructed as
// f(x) = f_s + g_s·(x − x̄_s), x̄_s the cell's mean position (its first moment over its
// area; a point inside the sphere), with the gradient g_s a linear least-squares fit to
// the neighbours' means: f_s + g_s·(x̄_k − x̄_s) ≈ f_k for the cells k sharing a vertex
// with s. On the sphere g_s is tangent at x̄_s and all positions are 3-D, so there is no
// longitude or latitude and no metric term (this sidesteps the longitudinal centroid term
// that Jones's latitude–longitude form gets wrong, see Saito 2026). Integrating the
// reconstruction over a piece of overlap gives
//
//	∫_{s∩t} f = |s∩t| f_s + g_s·d,   d = ∫_{s∩t} (x − x̄_s) dA,
//
// so with g_s = Σ_k G_k (f_k − f_s) the piece adds (|s∩t| − Σ_k G_k·d)/|t| to W_ts and
// G_k·d/|t| to W_tk. Row sums stay exactly those of order 1 (constants are preserved), and
// because the pieces' moments d of a fully covered source sum to zero (x̄_s is computed
// from the pieces themselves, and the rounding residue is removed in proportion to area)
// the column sums do too: the map conserves to rounding.
func buildConservative(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	o, err := ComputeOverlaps(src, tgt, OverlapOptions{Workers: opt.Workers, Moments: opt.Order == 2, Done: opt.Done})
	if err != nil {
		return nil, err
	}
	ns, nt := src.NumCells(), tgt.NumCells()
	srcOn := func(s int) bool { return opt.SourceMask == nil || opt.SourceMask[s] }
	tgtOn := func(t int) bool { return opt.TargetMask == nil || opt.TargetMask[t] }

	srcCov, tgtCov, denom := coverages(o, opt, srcOn, tgtOn)

	var grad *gradients
	if opt.Order == 2 {
		grad = newGradients(src, srcOn, opt.Workers)
	}

	// Triplets per source cell, built in parallel, assembled in source order.
	type part struct {
		lo  int
		ts  []weights.Triplet
		err error
	}
	var parts []part
	results := make(chan part, 64)
	done := make(chan struct{})
	go func() {
		for p := range results {
			parts = append(parts, p)
		}
		close(done)
	}()
	par.For(ns, opt.Workers, 1024, func(lo, hi int) {
		var ts []weights.Triplet
		var d []r3.Vec
		for s := lo; s < hi; s++ {
			if !srcOn(s) {
				continue
			}
			p0, p1 := o.SrcStart[s], o.SrcStart[s+1]
			if grad != nil {
				d = pieceMoments(o, s, tgtOn, d[:0])
			}
			for p := p0; p < p1; p++ {
				t := o.Tgt[p]
				if !tgtOn(int(t)) || denom[t] == 0 {
					continue
				}
				inv := 1 / denom[t]
				w := o.Area[p]
				if grad != nil {
					dp := d[p-p0]
					nb, gk := grad.of(s)
					sum := 0.0
					for i, k := range nb {
						c := r3.Dot(gk[i], dp)
						sum += c
						ts = append(ts, weights.Triplet{Row: t, Col: k, Value: c * inv})
					}
					w -= sum
				}
				ts = append(ts, weights.Triplet{Row: t, Col: int32(s), Value: w * inv})
			}
		}
		results <- part{lo: lo, ts: ts}
	})
	close(results)
	<-done
	total := 0
	for _, p := range parts {
		total += len(p.ts)
	}
	all := make([]weights.Triplet, 0, total)
	// Deterministic assembly: FromTriplets sorts stably by (row, column), so the order in
	// which parts arrive must not matter: sort parts by their first source.
	sortParts(parts, func(i int) int { return parts[i].lo })
	for _, p := range parts {
		all = append(all, p.ts...)
	}
	w := weights.FromTriplets(nt, ns, all)
	m := &weights.Map{
		W:      w,
		Source: cellSide(src, srcCov),
		Target: cellSide(tgt, tgtCov),
		Method: Conservative,
		Order:  opt.Order,
	}
	if anyPartial(tgtCov) || anyPartial(srcCov) {
		m.Normalization = opt.Normalization
	}
	return m, nil
}

func anyPartial(cov []float64) bool {
	for _, c := range cov {
		if c < coveredShare {
			return true
		}
	}
	return false
}

// pieceMoments returns d_p = ∫_p (x − x̄_s) dA for the pieces of source s with active
// targets, where x̄_s is the mean position of those pieces together, with the rounding
// residue Σ d_p removed in proportion to area so that Σ d_p = 0 to rounding of the d_p
// themselves (what makes second-order maps conserve to 1e-15, not 1e-15/h²).
func pieceMoments(o *Overlaps, s int, tgtOn func(int) bool, d []r3.Vec) []r3.Vec {
	p0, p1 := o.SrcStart[s], o.SrcStart[s+1]
	var ax, mx, my, mz weights.Accumulator
	for p := p0; p < p1; p++ {
		if !tgtOn(int(o.Tgt[p])) {
			continue
		}
		ax.Add(o.Area[p])
		mx.Add(o.Moment[p].X)
		my.Add(o.Moment[p].Y)
		mz.Add(o.Moment[p].Z)
	}
	a := ax.Sum()
	var c r3.Vec
	if a > 0 {
		c = r3.Vec{X: mx.Sum() / a, Y: my.Sum() / a, Z: mz.Sum() / a}
	}
	var res r3.Vec
	for p := p0; p < p1; p++ {
		dp := r3.Sub(o.Moment[p], r3.Scale(o.Area[p], c))
		if !tgtOn(int(o.Tgt[p])) {
			dp = r3.Vec{}
		}
		d = append(d, dp)
		res = r3.Add(res, dp)
	}
	if a > 0 {
		for i := range d {
			if tgtOn(int(o.Tgt[p0+int64(i)])) {
				d[i] = r3.Sub(d[i], r3.Scale(o.Area[p0+int64(i)]/a, res))
			}
		}
	}
	return d
}

// gradients holds, for every source cell s, the least-squares gradient operator
// g_s = Σ_k G_k (f_k − f_s) over its vertex neighbours k.
type gradients struct {
	start []int32
	nb    []int32
	g     []r3.Vec
}

func (g *gradients) of(s int) ([]int32, []r3.Vec) {
	return g.nb[g.start[s]:g.start[s+1]], g.g[g.start[s]:g.start[s+1]]
}

// newGradients fits, per cell, the gradient of a linear function from the neighbours'
// means: minimise Σ_k (f_s + g·(x̄_k − x̄_s) − f_k)² over g in the tangent plane (sphere)
// or the plane. Cells with fewer than two independent neighbours get g = 0 (first order
// there).
func newGradients(m *grids.Mesh, on func(int) bool, workers int) *gradients {
	nc := m.NumCells()
	mean := make([]r3.Vec, nc) // mean positions x̄ (sphere: inside; plane: cell frame)
	par.For(nc, workers, 2048, func(lo, hi int) {
		for c := lo; c < hi; c++ {
			mom := m.CellMoment(c)
			a := m.CellArea[c] / (m.Scale() * m.Scale())
			mean[c] = r3.Scale(1/a, mom)
		}
	})
	nbs := make([][]int32, nc)
	gs := make([][]r3.Vec, nc)
	par.For(nc, workers, 1024, func(lo, hi int) {
		var cand []int32
		for s := lo; s < hi; s++ {
			if !on(s) {
				continue
			}
			cand = vertexNeighbours(m, s, cand[:0])
			var e1, e2 r3.Vec
			xs := mean[s]
			if m.Surface == grids.Sphere {
				n := r3.Unit(xs)
				e1 = r3.Unit(r3.Cross(n, anyPerp(n)))
				e2 = r3.Cross(n, e1)
			} else {
				e1, e2 = r3.Vec{X: 1}, r3.Vec{Y: 1}
			}
			ref := m.Verts[m.CellVerts[m.CellStart[s]]]
			var rows [][2]float64
			var keep []int32
			var n11, n12, n22 float64
			for _, k := range cand {
				if !on(int(k)) {
					continue
				}
				xk := mean[k]
				if m.Surface == grids.Plane {
					// Bring the neighbour's mean into s's frame.
					kref := m.Verts[m.CellVerts[m.CellStart[k]]]
					shift := r3.Sub(m.Unwrap(kref, ref), kref)
					xk = r3.Add(xk, shift)
				}
				dx := r3.Sub(xk, xs)
				r := [2]float64{r3.Dot(dx, e1), r3.Dot(dx, e2)}
				rows = append(rows, r)
				keep = append(keep, k)
				n11 += r[0] * r[0]
				n12 += r[0] * r[1]
				n22 += r[1] * r[1]
			}
			det := n11*n22 - n12*n12
			// A nearly singular normal matrix (neighbours on one line): first order here.
			if len(keep) < 2 || !(det > 1e-10*(n11+n22)*(n11+n22)) {
				continue
			}
			gk := make([]r3.Vec, len(keep))
			for i, r := range rows {
				a := (n22*r[0] - n12*r[1]) / det
				b := (n11*r[1] - n12*r[0]) / det
				gk[i] = r3.Add(r3.Scale(a, e1), r3.Scale(b, e2))
			}
			nbs[s], gs[s] = keep, gk
		}
	})
	g := &gradients{start: make([]int32, nc+1)}
	for s := 0; s < nc; s++ {
		g.start[s+1] = g.start[s] + int32(len(nbs[s]))
	}
	g.nb = make([]int32, 0, g.start[nc])
	g.g = make([]r3.Vec, 0, g.start[nc])
	for s := 0; s < nc; s++ {
		g.nb = append(g.nb, nbs[s]...)
		g.g = append(g.g, gs[s]...)
	}
	return g
}

// vertexNeighbours appends the cells other than c that share a vertex with c, sorted.
func vertexNeighbours(m *grids.Mesh, c int, dst []int32) []int32 {
	for _, v := range m.CellVertices(c) {
		for _, k := range m.VertexCells(int(v)) {
			if int(k) == c {
				continue
			}
			dup := false
			for _, x := range dst {
				dup = dup || x == k
			}
			if !dup {
				dst = append(dst, k)
			}
		}
	}
	sortInt32(dst)
	return dst
}
