package remap

import (
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// Finite-element spaces (grids.DG1, grids.CG2) on a mesh of triangles and/or
// quadrilaterals. The degrees of freedom follow grids/location.go:
//
//   - dg1: one value per cell corner, in CellVerts order (the field's value at that corner
//     from inside the cell). Triangles carry P1 (linear), quadrilaterals Q1 (bilinear in
//     the reference coordinates of the bilinear map of the corners).
//   - cg2: the values at every vertex (vertex order), then at every edge midpoint (edge
//     order, EdgeMid), then at the centre of every quadrilateral (in cell order among the
//     quadrilaterals). Triangles carry P2, quadrilaterals Q2 (biquadratic in the reference
//     coordinates), with the centre node at reference (½, ½).
//
// Where the basis lives: on the plane, in the plane's coordinates; on the sphere, in the
// gnomonic projection of each cell onto the tangent plane at its centroid, which maps the
// cell's great-arc edges to straight segments. A triangle's P1/P2 functions are
// polynomials in those coordinates, a quadrilateral's Q1/Q2 functions polynomials in the
// reference coordinates of the bilinear map of its projected corners. The nodes are the
// projected vertices and edge midpoints (EdgeMid, the arc midpoints), so the Lagrange
// property holds exactly at the points FESpaceNodes returns. Every basis sums to 1 at
// every point (constants are reproduced). On the plane, P1/Q1 reproduce linear functions
// and P2/Q2 quadratic ones exactly (the bilinear geometry lies in the Q1 space).

// feOrder is the order of accuracy of the footprint means of each space.
func feOrder(space grids.HLocation) int {
	if space == grids.CG2 {
		return 3
	}
	return 2
}

// quadRanks returns, for every cell, its rank among the quadrilaterals (−1 for others).
func quadRanks(m *grids.Mesh) []int32 {
	q := make([]int32, m.NumCells())
	n := int32(0)
	for c := range q {
		q[c] = -1
		if m.CellStart[c+1]-m.CellStart[c] == 4 {
			q[c] = n
			n++
		}
	}
	return q
}

// feBases builds the basis of every cell of m.
func feBases(m *grids.Mesh, space grids.HLocation) ([]*feBasis, error) {
	if space != grids.DG1 && space != grids.CG2 {
		return nil, fmt.Errorf("%w: %v is not a finite-element space (want dg1 or cg2)", ErrBadOptions, space)
	}
	qr := quadRanks(m)
	bs := make([]*feBasis, m.NumCells())
	for c := range bs {
		b, err := newFEBasis(m, c, space, qr)
		if err != nil {
			return nil, err
		}
		bs[c] = b
	}
	return bs, nil
}

// FESpaceMeasure returns μ_i = ∫ φ_i dA for every degree of freedom of space (grids.DG1 or
// grids.CG2) on m (m² on the sphere, plane units on the plane), by the quadrature of
// BuildFESpace over each whole cell. The integral of a field with values f is Σ_i μ_i f_i.
// P1 functions integrate to A/3 per corner and Q1 functions to A/4 on parallelograms;
// Q2 vertex, edge and centre functions to A/36, A/9 and 4A/9 on parallelograms; the P2
// vertex functions integrate to exactly 0 on flat triangles (about 0, either sign, on the
// sphere), so a cg2 space on triangles has no positive diagonal measure.
func FESpaceMeasure(m *grids.Mesh, space grids.HLocation) ([]float64, error) {
	bs, err := feBases(m, space)
	if err != nil {
		return nil, err
	}
	mu, _ := feMeasure(m, space, bs)
	return mu, nil
}

// feMeasure returns the basis integrals μ of every DOF (m² / plane units) and, per cell,
// the integrals of its local functions over the whole cell (unit sphere / plane units).
func feMeasure(m *grids.Mesh, space grids.HLocation, bs []*feBasis) ([]float64, [][9]float64) {
	r := newFERule(feGaussPoints)
	acc := make([]weights.Accumulator, m.Size(space))
	cell := make([][9]float64, len(bs))
	sc := newFEScratch()
	var poly []PolyVertex
	s2 := m.Scale() * m.Scale()
	for c, b := range bs {
		poly = cellPolygon(m, c, m.Verts[m.CellVerts[m.CellStart[c]]], poly[:0])
		b.integrate(cell[c][:], poly, &r, sc)
		for i, d := range b.dofs {
			acc[d].Add(cell[c][i] * s2)
		}
	}
	mu := make([]float64, len(acc))
	for i := range acc {
		mu[i] = acc[i].Sum()
	}
	return mu, cell
}

// FESpaceNodes returns the position of every degree of freedom of space on m: the cell
// corners (dg1, repeated per cell, as stored in Verts), or the vertices, the edge
// midpoints and the quadrilateral centres (cg2). A quadrilateral's centre is the image of
// reference (½, ½): the mean of its corners on the plane (wrapped into a periodic
// domain), the back-projection of the mean of its gnomonic corners on the sphere.
// Sampling a field at these points gives its interpolant in the space.
func FESpaceNodes(m *grids.Mesh, space grids.HLocation) ([]r3.Vec, error) {
	switch space {
	case grids.DG1:
		out := make([]r3.Vec, len(m.CellVerts))
		for h, v := range m.CellVerts {
			out[h] = m.Verts[v]
		}
		return out, nil
	case grids.CG2:
		out := make([]r3.Vec, 0, m.Size(grids.CG2))
		out = append(out, m.Verts...)
		out = append(out, m.EdgeMid...)
		for c := 0; c < m.NumCells(); c++ {
			if m.CellStart[c+1]-m.CellStart[c] != 4 {
				continue
			}
			f := newFEFrame(m, c)
			var buf [4]r3.Vec
			var x, y float64
			for _, v := range m.CellPoints(c, buf[:0]) {
				a, b := f.local(v)
				x, y = x+a/4, y+b/4
			}
			out = append(out, m.Wrap(f.point(x, y)))
		}
		return out, nil
	}
	return nil, fmt.Errorf("%w: %v is not a finite-element space (want dg1 or cg2)", ErrBadOptions, space)
}

// fePiece is the quadrature of one source cell's basis over one overlap piece.
type fePiece struct {
	t    int32
	area float64
	ints [9]float64
}

// BuildFESpace returns the map from a dg1 or cg2 field on src (space: grids.DG1 or
// grids.CG2) to the means over the cells (footprints) of tgt:
//
//	W_{t,i} = Σ_{pieces p of t} ∫_p φ_i dA / |t|.
//
// Degrees of freedom (grids/location.go): dg1 has one value per cell corner, in CellVerts
// order, with P1 on triangles and Q1 (bilinear in the reference coordinates of the
// corners' bilinear map) on quadrilaterals; cg2 has the values at the vertices, then at
// the edge midpoints (EdgeMid), then at the quadrilateral centres (reference (½, ½)),
// with P2 on triangles and Q2 on quadrilaterals. On the sphere each cell's basis lives in
// its gnomonic projection onto the tangent plane at its centroid, where its great-arc
// edges are straight. Other cell shapes (hexagons...) are an error wrapping
// ErrBadOptions. FESpaceNodes gives the node positions.
//
// with the pieces of the supermesh (ComputeOverlaps, through its Visit callback), each
// integrated by a 25-point collapsed Gauss rule on each cone of the piece (flat triangles
// for straight edges, curved cones for small-circle edges: exact geometry), exact for
// degree 8 in the cell's coordinates; on the sphere in the gnomonic plane of the source
// cell, with its area factor. |t| is the covered part of the target (ByCovered, default)
// or its whole area (ByWhole).
//
// Over a fully covered source cell the pieces' integrals are then adjusted, in proportion
// to piece area, so that they add up to the cell's own integrals (FESpaceMeasure); the
// adjustment is the quadrature error of the pieces (TestFEQuadratureResidue, as a share
// of the cell area: rounding for triangles and parallelograms on the plane; ≤ 1e-9 for
// P1/P2 on 15° spherical triangles and Q1 on the 15° cubed sphere; 3e-7 for Q2 there and
// 5e-10 at N = 24; 1e-5 for Q2 on planar quadrilaterals with 20 % random skew), far below
// the method's own error, and it makes conservation exact.
//
// Guarantees (tested): rows sum to 1 (constants reproduced) and the column sums are the
// basis integrals, Σ_t A_t W_ti = μ_i (conservation of Σ_i μ_i f_i), both to 1e-13. On the
// plane linear fields (dg1) and quadratic fields (cg2) give the exact footprint means to
// rounding on triangles and on any convex quadrilaterals (the interpolant is the
// polynomial itself, which the rule integrates exactly, and the residue correction
// cancels for it). On the sphere the footprint means of smooth
// fields converge at second (dg1) and third (cg2) order (measured 2.0 and 3.3–3.5).
//
// The source side carries μ as its measure when every μ_i > 0 (dg1, and cg2 on
// quadrilateral meshes); for cg2 with triangles, whose P2 vertex functions integrate to
// zero, Source.Measure is nil (Attrs["measure"] says why) and Adjoint refuses the map.
// Source coverage of a DOF is the smallest coverage of the cells it belongs to. Options:
// Normalization, SourceMask, TargetMask (per cell), Workers, Done and Provenance apply;
// Method and Order are ignored (Method FEQuadrature, Order 2 for dg1 and 3 for cg2).
func BuildFESpace(src *grids.Mesh, space grids.HLocation, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	if err := opt.checkCells(src, tgt); err != nil {
		return nil, err
	}
	bs, err := feBases(src, space)
	if err != nil {
		return nil, err
	}
	srcOn := func(s int) bool { return opt.SourceMask == nil || opt.SourceMask[s] }
	tgtOn := func(t int) bool { return opt.TargetMask == nil || opt.TargetMask[t] }
	rule := newFERule(feGaussPoints)
	// Calls for one source cell come from one goroutine, so each pieces[s] has one writer.
	pieces := make([][]fePiece, src.NumCells())
	pool := sync.Pool{New: func() any { return newFEScratch() }}
	visit := func(_ int, s, t int, poly []PolyVertex) {
		if !srcOn(s) || !tgtOn(t) {
			return
		}
		sc := pool.Get().(*feScratch)
		defer pool.Put(sc)
		ps := pieces[s]
		if n := len(ps); n == 0 || ps[n-1].t != int32(t) {
			ps = append(ps, fePiece{t: int32(t)})
		}
		p := &ps[len(ps)-1]
		p.area += bs[s].integrate(p.ints[:], poly, &rule, sc)
		pieces[s] = ps
	}
	if _, err := ComputeOverlaps(src, tgt, OverlapOptions{Workers: opt.Workers, Done: opt.Done, Visit: visit}); err != nil {
		return nil, err
	}

	ns, nt := src.NumCells(), tgt.NumCells()
	sUnit := 1 / (src.Scale() * src.Scale())
	tUnit := 1 / (tgt.Scale() * tgt.Scale())
	// Drop rounding slivers as the overlap engine does (SliverShare), then sum coverage.
	for s, ps := range pieces {
		keep := ps[:0]
		for _, p := range ps {
			if p.area > SliverShare*math.Min(src.CellArea[s]*sUnit, tgt.CellArea[p.t]*tUnit) {
				keep = append(keep, p)
			}
		}
		pieces[s] = keep
	}
	covS := make([]weights.Accumulator, ns)
	covT := make([]weights.Accumulator, nt)
	for s, ps := range pieces {
		for _, p := range ps {
			covS[s].Add(p.area)
			covT[p.t].Add(p.area)
		}
	}
	denom := make([]float64, nt)
	tgtCov := make([]float64, nt)
	for t := range denom {
		c := covT[t].Sum()
		tgtCov[t] = math.Min(1, math.Max(0, c/(tgt.CellArea[t]*tUnit)))
		if opt.Normalization == ByCovered {
			denom[t] = c
		} else {
			denom[t] = tgt.CellArea[t] * tUnit
		}
	}

	// Residue correction: over a fully covered source cell the pieces' integrals must add
	// up to the cell's own; they differ by the quadrature error of the pieces. The
	// difference is spread over the pieces in proportion to their area, as the
	// second-order maps do with their moments (conservative.go): conservation becomes
	// exact to rounding and row sums are unchanged (the corrections of a piece sum to
	// (area/A)·Σ_i δ_i, and Σ_i δ_i = 0 to rounding because both the cell's and the pieces'
	// weights are rescaled to exact areas).
	mu, cellInt := feMeasure(src, space, bs)
	for s, ps := range pieces {
		a := covS[s].Sum()
		if len(ps) == 0 || a < coveredShare*src.CellArea[s]*sUnit {
			continue
		}
		b := bs[s]
		var delta [9]float64
		for i := range b.n {
			var k weights.Accumulator
			k.Add(cellInt[s][i])
			for _, p := range ps {
				k.Add(-p.ints[i])
			}
			delta[i] = k.Sum()
		}
		for j := range ps {
			f := ps[j].area / a
			for i := range b.n {
				ps[j].ints[i] += f * delta[i]
			}
		}
	}

	var ts []weights.Triplet
	for s, ps := range pieces {
		b := bs[s]
		for _, p := range ps {
			if !(denom[p.t] > 0) {
				continue
			}
			inv := 1 / denom[p.t]
			for i, d := range b.dofs {
				ts = append(ts, weights.Triplet{Row: p.t, Col: d, Value: p.ints[i] * inv})
			}
		}
	}
	size := src.Size(space)
	w := weights.FromTriplets(nt, size, ts)

	srcSide := weights.Side{
		MeshName:        src.Name,
		MeshFingerprint: src.Fingerprint(),
		Location:        grids.Location{H: space},
		Size:            size,
	}
	var attrs map[string]string
	positive := true
	for _, x := range mu {
		positive = positive && x > 0
	}
	if positive {
		srcSide.Measure = mu
	} else {
		attrs = map[string]string{"measure": "none: some basis functions integrate to zero or less (P2 vertex functions on triangles); see remap.FESpaceMeasure"}
	}
	// Coverage per DOF: the smallest coverage of its cells.
	cov := make([]float64, size)
	for i := range cov {
		cov[i] = 1
	}
	partial := false
	for s, b := range bs {
		c := math.Min(1, covS[s].Sum()/(src.CellArea[s]*sUnit))
		if !srcOn(s) {
			c = 0
		}
		partial = partial || c < coveredShare
		for _, d := range b.dofs {
			cov[d] = math.Min(cov[d], c)
		}
	}
	if partial {
		srcSide.Coverage = cov
	}
	tgtSide := cellSide(tgt, nil)
	if anyPartial(tgtCov) {
		tgtSide.Coverage = tgtCov
		partial = true
	}
	m := &weights.Map{
		W:          w,
		Source:     srcSide,
		Target:     tgtSide,
		Method:     FEQuadrature,
		Order:      feOrder(space),
		Provenance: opt.Provenance,
		Attrs:      attrs,
	}
	if partial {
		m.Normalization = opt.Normalization
	}
	return m, m.Check()
}
