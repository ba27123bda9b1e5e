package remap

import (
	"math"
	"slices"
	"sync"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// buildHighOrder builds conservative maps of order 3 and 4: on every source cell a
// polynomial of degree p = order − 1 fitted to the means of a patch of neighbours (see
// reconstructor), integrated over every piece of overlap by Gauss quadrature in the
// cell's gnomonic frame (see momentIntegrator). Ullrich & Taylor 2015 (Mon. Wea. Rev.
// 143:2419–2440) give the theory of such linear maps.
//
// For a piece P of source s and target t, with the non-constant monomials φ_α of s's
// frame and their moments M_α,P = ∫_P φ_α dA by quadrature,
//
//	∫_P f_s = |P| f̄_s + Σ_α a_α d_α,P,   d_α,P = M_α,P − |P| φ̄_α,s,
//
// where |P| is the exact area from the overlap engine and φ̄_α,s = Σ_P M_α,P / Σ_P |P| is
// the mean of φ_α over s computed with the same quadrature summed over s's own pieces.
// Then Σ_P d_α,P = 0 (the rounding residue is removed in proportion to area, as for order
// 2), so the pieces of s carry exactly |s| f̄_s: column sums are 1 to rounding
// (conservation), whatever the quadrature error. With a_α = Σ_k C_αk (f̄_k − f̄_s), piece
// P adds (|P| − Σ_k e_k)/|t| to W_ts and e_k/|t| to W_tk, e_k = Σ_α C_αk d_α,P; the e_k
// cancel in the row sum, which stays Σ|P|/|t| = 1 (consistency). Measured on the test
// meshes (cubed N=24, icosahedral dual level 4, lat–lon 2° and 1.5°): conservation
// defect ≤ 3e-14, consistency defect ≤ 1e-15; a mesh mapped to itself gives the identity.
// Observed L2 convergence (cubed sphere → lat–lon, TestHighOrderConvergence): order 3
// ≈ 3.7 and order 4 ≈ 4.1 on the smooth field of REFERENCES.md.
//
// Masks and partial coverage are treated as for orders 1–2: masked cells take no part in
// pieces or patches, and φ̄_α,s is taken over the pieces with active targets.
//
// Work: the overlaps (as for orders 1–2); per piece a quadrature of 16 points per fan
// triangle; per source cell a weighted least-squares fit over its patch (8 cells for
// order 3, 24 for order 4 on quadrilaterals, more at lat–lon poles), each patch cell
// integrated in the source's frame. The result does not depend on the number of
// workers. Memory: per piece 1 + (patch size) weights until the rows are assembled.
func buildHighOrder(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	p := opt.Order - 1
	ns, nt := src.NumCells(), tgt.NumCells()
	srcOn := func(s int) bool { return opt.SourceMask == nil || opt.SourceMask[s] }
	tgtOn := func(t int) bool { return opt.TargetMask == nil || opt.TargetMask[t] }
	rec := newReconstructor(src, p, srcOn, opt.Workers)
	nm := numMonomials(p)
	nu := nm - 1

	// Moments of every visited polygon in its source's frame, kept per source cell: the
	// engine calls Visit for one source cell from one goroutine, so each slot has a
	// single writer.
	type visits struct {
		tgt []int32
		mom []float64 // nm per visit
	}
	vis := make([]visits, ns)
	integrators := sync.Pool{New: func() any { return newMomentIntegrator(rec.rule) }}
	o, err := ComputeOverlaps(src, tgt, OverlapOptions{
		Workers: opt.Workers,
		Done:    opt.Done,
		Visit: func(_, s, t int, poly []PolyVertex) {
			if !srcOn(s) || !tgtOn(t) {
				return
			}
			mi := integrators.Get().(*momentIntegrator)
			v := &vis[s]
			off := len(v.mom)
			v.tgt = append(v.tgt, int32(t))
			v.mom = append(v.mom, make([]float64, nm)...)
			mi.integrate(&rec.frames[s], poly, v.mom[off:])
			integrators.Put(mi)
		},
	})
	if err != nil {
		return nil, err
	}
	srcCov, tgtCov, denom := coverages(o, opt, srcOn, tgtOn)

	// Per source: its patch, and for each of its pieces the weight of every column of
	// [s, patch...] before division by the target's denominator (1 + len(patch) values
	// per piece).
	patches := make([][]int32, ns)
	vals := make([][]float64, ns)
	par.For(ns, opt.Workers, 256, func(lo, hi int) {
		ft := rec.newFitter()
		var d, mom []float64
		var acc []weights.Accumulator
		for s := lo; s < hi; s++ {
			if !srcOn(s) {
				continue
			}
			p0, p1 := o.SrcStart[s], o.SrcStart[s+1]
			np := int(p1 - p0)
			if np == 0 {
				continue
			}
			// Moments of the kept pieces (slivers dropped by the engine are skipped), the
			// sub-polygons of one target summed in visiting order.
			mom = append(mom[:0], make([]float64, np*nu)...)
			v := &vis[s]
			for i, t := range v.tgt {
				j, ok := slices.BinarySearch(o.Tgt[p0:p1], t)
				if !ok {
					continue
				}
				for a := 0; a < nu; a++ {
					mom[j*nu+a] += v.mom[i*nm+a+1]
				}
			}
			vis[s] = visits{} // free
			d = centredMoments(o, s, tgtOn, mom, nu, d[:0], &acc)
			nb, c, _ := ft.fit(s)
			patches[s] = slices.Clone(nb)
			stride := 1 + len(nb)
			out := make([]float64, np*stride)
			for j := 0; j < np; j++ {
				row := out[j*stride : (j+1)*stride]
				dj := d[j*nu : (j+1)*nu]
				sum := 0.0
				for i := range nb {
					e := 0.0
					for a := 0; a < nu; a++ {
						e += c[a*len(nb)+i] * dj[a]
					}
					row[1+i] = e
					sum += e
				}
				row[0] = o.Area[p0+int64(j)] - sum
			}
			vals[s] = out
		}
	})

	// Rows: the pieces of each target in source order.
	tStart := make([]int64, nt+1)
	for _, t := range o.Tgt {
		tStart[t+1]++
	}
	for t := 0; t < nt; t++ {
		tStart[t+1] += tStart[t]
	}
	tPieces := make([]int64, len(o.Tgt))
	fill := slices.Clone(tStart[:nt])
	for q, t := range o.Tgt {
		tPieces[fill[t]] = int64(q)
		fill[t]++
	}
	pieceSrc := func(q int64) int {
		s, _ := slices.BinarySearch(o.SrcStart, q+1)
		return s - 1
	}
	colIdx := make([][]int32, nt)
	rowVals := make([][]float64, nt)
	// Dense accumulators (one per running block, reused through the pool): column sums
	// in a fixed order (pieces by source, then patch order), so the result does not
	// depend on the number of workers. mark[col] == t+1 says col is in row t already.
	type accumulator struct {
		sum  []float64
		mark []int32
	}
	pool := sync.Pool{New: func() any {
		return &accumulator{sum: make([]float64, ns), mark: make([]int32, ns)}
	}}
	par.For(nt, opt.Workers, 512, func(lo, hi int) {
		ac := pool.Get().(*accumulator)
		defer pool.Put(ac)
		var touched []int32
		for t := lo; t < hi; t++ {
			if !tgtOn(t) || denom[t] == 0 {
				continue
			}
			touched = touched[:0]
			stamp := int32(t + 1)
			add := func(col int32, v float64) {
				if ac.mark[col] != stamp {
					ac.mark[col] = stamp
					ac.sum[col] = 0
					touched = append(touched, col)
				}
				ac.sum[col] += v
			}
			for _, q := range tPieces[tStart[t]:tStart[t+1]] {
				s := pieceSrc(q)
				if !srcOn(s) {
					continue
				}
				nb := patches[s]
				stride := int64(1 + len(nb))
				row := vals[s][(q-o.SrcStart[s])*stride:]
				add(int32(s), row[0])
				for k, col := range nb {
					add(col, row[1+k])
				}
			}
			slices.Sort(touched)
			inv := 1 / denom[t]
			cols := make([]int32, 0, len(touched))
			vs := make([]float64, 0, len(touched))
			for _, col := range touched {
				if v := ac.sum[col]; v != 0 {
					cols = append(cols, col)
					vs = append(vs, v*inv)
				}
			}
			colIdx[t], rowVals[t] = cols, vs
		}
	})
	return conservativeMap(weights.FromRows(nt, ns, colIdx, rowVals), src, tgt, srcCov, tgtCov, opt), nil
}

// coverages returns the covered share of every source and target cell and the number
// each target's row is divided by (its covered area, or its whole area for ByWhole), in
// unit-sphere or plane units, as buildConservative computes them.
func coverages(o *Overlaps, opt Options, srcOn, tgtOn func(int) bool) (srcCov, tgtCov, denom []float64) {
	src, tgt := o.Source, o.Target
	ns, nt := src.NumCells(), tgt.NumCells()
	sUnit := 1 / (src.Scale() * src.Scale())
	tUnit := 1 / (tgt.Scale() * tgt.Scale())
	covS := make([]weights.Accumulator, ns)
	covT := make([]weights.Accumulator, nt)
	for s := 0; s < ns; s++ {
		if !srcOn(s) {
			continue
		}
		for q := o.SrcStart[s]; q < o.SrcStart[s+1]; q++ {
			t := o.Tgt[q]
			if !tgtOn(int(t)) {
				continue
			}
			covS[s].Add(o.Area[q])
			covT[t].Add(o.Area[q])
		}
	}
	srcCov = make([]float64, ns)
	tgtCov = make([]float64, nt)
	denom = make([]float64, nt)
	for s := range srcCov {
		srcCov[s] = math.Min(1, covS[s].Sum()/(src.CellArea[s]*sUnit))
	}
	for t := range tgtCov {
		c := covT[t].Sum()
		tgtCov[t] = math.Min(1, c/(tgt.CellArea[t]*tUnit))
		if opt.Normalization == ByCovered {
			denom[t] = c
		} else {
			denom[t] = tgt.CellArea[t] * tUnit
		}
	}
	return
}

// centredMoments returns d_α,P = M_α,P − |P| φ̄_α,s for the pieces of source s (nu per
// piece, zero for inactive targets), φ̄_α,s = Σ M_α,P / Σ |P| over the active pieces,
// with the rounding residue Σ_P d_α,P removed in proportion to area so that the centred
// moments sum to zero to the rounding of the d themselves (what makes the map conserve
// to 1e-15 rather than to the quadrature error).
func centredMoments(o *Overlaps, s int, tgtOn func(int) bool, mom []float64, nu int, d []float64, acc *[]weights.Accumulator) []float64 {
	p0, p1 := o.SrcStart[s], o.SrcStart[s+1]
	np := int(p1 - p0)
	*acc = append((*acc)[:0], make([]weights.Accumulator, nu+1)...)
	sums := *acc
	for j := 0; j < np; j++ {
		if !tgtOn(int(o.Tgt[p0+int64(j)])) {
			continue
		}
		sums[nu].Add(o.Area[p0+int64(j)])
		for a := 0; a < nu; a++ {
			sums[a].Add(mom[j*nu+a])
		}
	}
	area := sums[nu].Sum()
	d = append(d[:0], make([]float64, np*nu)...)
	if !(area > 0) {
		return d
	}
	for a := 0; a < nu; a++ {
		mean := sums[a].Sum() / area
		var res weights.Accumulator
		for j := 0; j < np; j++ {
			if !tgtOn(int(o.Tgt[p0+int64(j)])) {
				continue
			}
			v := mom[j*nu+a] - o.Area[p0+int64(j)]*mean
			d[j*nu+a] = v
			res.Add(v)
		}
		r := res.Sum()
		for j := 0; j < np; j++ {
			if tgtOn(int(o.Tgt[p0+int64(j)])) {
				d[j*nu+a] -= o.Area[p0+int64(j)] / area * r
			}
		}
	}
	return d
}
