package remap

import (
	"gonum.org/v1/gonum/spatial/r3"
	"slices"
	"sync"

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
	ns := src.NumCells()
	srcOn := func(s int) bool { return opt.SourceMask == nil || opt.SourceMask[s] }
	tgtOn := func(t int) bool { return opt.TargetMask == nil || opt.TargetMask[t] }

	srcCov, tgtCov, denom := coverages(o, opt, srcOn, tgtOn)

	var grad *gradients
	if opt.Order == 2 {
		grad = newGradients(src, srcOn, opt.Workers)
	}

	// The centred piece moments d, per source, in parallel (order 2), written over the
	// pieces' moments (which are not needed afterwards).
	var d []r3.Vec
	if grad != nil {
		d = o.Moment
		par.For(ns, opt.Workers, 1024, func(lo, hi int) {
			var buf []r3.Vec
			for s := lo; s < hi; s++ {
				if srcOn(s) {
					buf = pieceMoments(o, s, tgtOn, buf[:0])
					copy(d[o.SrcStart[s]:o.SrcStart[s+1]], buf)
				}
			}
		})
		o.Moment = nil
	}
	active := func(t int32) bool { return tgtOn(int(t)) && denom[t] != 0 }
	w := assembleRows(o, opt.Workers, func(p int64, s int, t int32, emit func(col int32, v float64)) {
		if !srcOn(s) || !active(t) {
			return
		}
		inv := 1 / denom[t]
		a := o.Area[p]
		if grad != nil {
			nb, gk := grad.of(s)
			sum := 0.0
			for i, k := range nb {
				c := r3.Dot(gk[i], d[p])
				sum += c
				emit(k, c*inv)
			}
			a -= sum
		}
		emit(int32(s), a*inv)
	})
	return conservativeMap(w, src, tgt, srcCov, tgtCov, opt), nil
}

// conservativeMap wraps a conservative matrix between the cells of src and tgt with its
// sides and metadata; the normalisation is recorded only where coverage is partial.
func conservativeMap(w *weights.CSR, src, tgt *grids.Mesh, srcCov, tgtCov []float64, opt Options) *weights.Map {
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
	return m
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

// assembleRows builds the matrix row by row (rows are targets): it groups the pieces by
// target, calls contrib for each piece of a row in increasing source order, and sums the
// emitted (column, value) pairs of a row by column in the order they were emitted. Rows
// are built in parallel; the result does not depend on the number of workers. This needs
// one matrix-sized buffer per block instead of a triplet list and its sorted copy (for
// the cubed sphere N = 384 to 0.25° at order 2: 17 million weights, about 0.4 GB less).
func assembleRows(o *Overlaps, workers int, contrib func(p int64, s int, t int32, emit func(col int32, v float64))) *weights.CSR {
	ns, nt := o.Source.NumCells(), o.Target.NumCells()
	// Pieces by target (counting sort; sources stay increasing within a target).
	tStart := make([]int64, nt+1)
	for _, t := range o.Tgt {
		tStart[t+1]++
	}
	for t := 0; t < nt; t++ {
		tStart[t+1] += tStart[t]
	}
	byT := make([]int64, o.Len())
	srcOf := make([]int32, o.Len())
	next := append([]int64(nil), tStart[:nt]...)
	for s := 0; s < ns; s++ {
		for p := o.SrcStart[s]; p < o.SrcStart[s+1]; p++ {
			t := o.Tgt[p]
			byT[next[t]] = p
			srcOf[next[t]] = int32(s)
			next[t]++
		}
	}
	next = nil
	type block struct {
		lo   int
		rows []int32 // entries per row
		cols []int32
		vals []float64
	}
	var mu sync.Mutex
	var blocks []*block
	par.For(nt, workers, 2048, func(lo, hi int) {
		b := &block{lo: lo, rows: make([]int32, hi-lo)}
		est := int(tStart[hi]-tStart[lo]) * 2
		b.cols, b.vals = make([]int32, 0, est), make([]float64, 0, est)
		var rc []int32
		var rv []float64
		emit := func(col int32, v float64) { rc, rv = append(rc, col), append(rv, v) }
		for t := lo; t < hi; t++ {
			rc, rv = rc[:0], rv[:0]
			for q := tStart[t]; q < tStart[t+1]; q++ {
				contrib(byT[q], int(srcOf[q]), int32(t), emit)
			}
			n0 := len(b.cols)
			appendMerged(&b.cols, &b.vals, rc, rv)
			b.rows[t-lo] = int32(len(b.cols) - n0)
		}
		mu.Lock()
		blocks = append(blocks, b)
		mu.Unlock()
	})
	slices.SortFunc(blocks, func(x, y *block) int { return x.lo - y.lo })
	total := 0
	for _, b := range blocks {
		total += len(b.cols)
	}
	w := &weights.CSR{Rows: nt, Cols: ns, RowStart: make([]int64, nt+1),
		ColIndex: make([]int32, 0, total), Values: make([]float64, 0, total)}
	for _, b := range blocks {
		for i, n := range b.rows {
			w.RowStart[b.lo+i+1] = int64(n)
		}
		w.ColIndex = append(w.ColIndex, b.cols...)
		w.Values = append(w.Values, b.vals...)
		b.cols, b.vals = nil, nil
	}
	for t := 0; t < nt; t++ {
		w.RowStart[t+1] += w.RowStart[t]
	}
	return w
}

// appendMerged appends the pairs (rc, rv) to (cols, vals) sorted by column, summing pairs
// with the same column in their given order. It reorders rc and rv.
func appendMerged(cols *[]int32, vals *[]float64, rc []int32, rv []float64) {
	// Insertion sort by column, stable (rows hold a few dozen entries).
	for i := 1; i < len(rc); i++ {
		for j := i; j > 0 && rc[j] < rc[j-1]; j-- {
			rc[j], rc[j-1] = rc[j-1], rc[j]
			rv[j], rv[j-1] = rv[j-1], rv[j]
		}
	}
	for i := 0; i < len(rc); {
		v := rv[i]
		j := i + 1
		for ; j < len(rc) && rc[j] == rc[i]; j++ {
			v += rv[j]
		}
		*cols = append(*cols, rc[i])
		*vals = append(*vals, v)
		i = j
	}
}
