package remap

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// stencilFunc returns the source cells and weights (summing to 1) that give the value at
// point p, appended to cols and w, or ok = false when p is not covered by the source. A
// stencil may name masked source cells; buildPointMap removes them.
type stencilFunc func(p r3.Vec, cols []int32, w []float64) ([]int32, []float64, bool)

// maskedShare: when the unmasked weights of a stencil sum to less than this share of its
// absolute weights, the target counts as uncovered rather than divided by (nearly) zero.
const maskedShare = 1e-12

// buildPointMap assembles a map whose rows are stencils at the target cell centroids (the
// column points), applying masks and normalisation the same way for every point method:
//
//   - a masked target, or one whose stencil is not covered, gets an empty row and
//     coverage 0;
//   - masked source cells are removed from each stencil; the target's coverage is the
//     share of the stencil's weight left on unmasked cells (1 without masks), and is 0,
//     with an empty row, when nothing is left;
//   - ByCovered divides the remaining weights by their sum (row sums 1: constants are
//     preserved); ByWhole keeps them as they are (row sum = coverage: masked sources act
//     as zeros).
//
// Source coverage is nil without a source mask; with one it is 0 on masked cells and 1
// elsewhere (point methods measure no areal coverage of source cells).
//
// newStencil is called once per block of targets, so a stencil may keep scratch state.
// Every row depends only on its target point, so the result does not depend on Workers.
func buildPointMap(src, tgt *grids.Mesh, opt Options, method string, order int, newStencil func() stencilFunc) (*weights.Map, error) {
	if src.Surface != tgt.Surface {
		return nil, fmt.Errorf("%w: source on the %v, target on the %v", ErrSurfaceMismatch, src.Surface, tgt.Surface)
	}
	ns, nt := src.NumCells(), tgt.NumCells()
	srcOn := func(s int32) bool { return opt.SourceMask == nil || opt.SourceMask[s] }
	cols := make([][]int32, nt)
	vals := make([][]float64, nt)
	tgtCov := make([]float64, nt)
	par.For(nt, opt.Workers, 512, func(lo, hi int) {
		stencil := newStencil()
		var c []int32
		var w []float64
		for t := lo; t < hi; t++ {
			if opt.TargetMask != nil && !opt.TargetMask[t] {
				continue
			}
			var ok bool
			c, w, ok = stencil(tgt.CellCentroid[t], c[:0], w[:0])
			if !ok {
				continue
			}
			var all, on, abs weights.Accumulator
			for i, s := range c {
				all.Add(w[i])
				abs.Add(math.Abs(w[i]))
				if srcOn(s) {
					on.Add(w[i])
				}
			}
			sumOn, sumAll := on.Sum(), all.Sum()
			if !(sumOn > maskedShare*abs.Sum()) {
				continue
			}
			div := sumOn
			if opt.Normalization == ByWhole {
				div = sumAll
			}
			row := make([]int32, 0, len(c))
			rv := make([]float64, 0, len(c))
			for i, s := range c {
				if srcOn(s) && w[i] != 0 {
					row = append(row, s)
					rv = append(rv, w[i]/div)
				}
			}
			row, rv = sortRow(row, rv)
			cols[t], vals[t] = row, rv
			tgtCov[t] = math.Max(0, math.Min(1, sumOn/sumAll))
		}
	})
	var srcCov []float64
	if opt.SourceMask != nil {
		srcCov = make([]float64, ns)
		for s := range srcCov {
			if opt.SourceMask[s] {
				srcCov[s] = 1
			}
		}
	}
	m := &weights.Map{
		W:      weights.FromRows(nt, ns, cols, vals),
		Source: cellSide(src, srcCov),
		Target: cellSide(tgt, tgtCov),
		Method: method,
		Order:  order,
	}
	if anyPartial(tgtCov) || (srcCov != nil && anyPartial(srcCov)) {
		m.Normalization = opt.Normalization
	}
	return m, nil
}

// sortRow sorts a row by column and adds up repeated columns.
func sortRow(c []int32, v []float64) ([]int32, []float64) {
	idx := make([]int, len(c))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return int(c[a]) - int(c[b]) })
	oc := make([]int32, 0, len(c))
	ov := make([]float64, 0, len(c))
	for _, i := range idx {
		if n := len(oc); n > 0 && oc[n-1] == c[i] {
			ov[n-1] += v[i]
			continue
		}
		oc = append(oc, c[i])
		ov = append(ov, v[i])
	}
	return oc, ov
}
