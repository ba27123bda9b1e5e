package remap

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// polyMoments returns ∫ x^p y^q dA over a simple counter-clockwise polygon for
// (p, q) ∈ {(0,0), (1,0), (0,1), (2,0), (1,1), (0,2)}, by the Green's-theorem vertex
// formulas with c_i = x_i y_{i+1} − x_{i+1} y_i (Steger 1996, "On the calculation of
// arbitrary moments of polygons"; from memory, so TestPolyMomentsSquare checks them on
// the unit square against calculus):
//
//	∫1 = ½Σc_i, ∫x = ⅙Σ(x_i + x_{i+1})c_i, ∫x² = (1/12)Σ(x_i² + x_i x_{i+1} + x_{i+1}²)c_i,
//	∫xy = (1/24)Σ(x_i y_{i+1} + 2x_i y_i + 2x_{i+1} y_{i+1} + x_{i+1} y_i)c_i.
func polyMoments(vs []r3.Vec) (m00, m10, m01, m20, m11, m02 float64) {
	n := len(vs)
	for i := range vs {
		a, b := vs[i], vs[(i+1)%n]
		c := a.X*b.Y - b.X*a.Y
		m00 += c / 2
		m10 += (a.X + b.X) * c / 6
		m01 += (a.Y + b.Y) * c / 6
		m20 += (a.X*a.X + a.X*b.X + b.X*b.X) * c / 12
		m02 += (a.Y*a.Y + a.Y*b.Y + b.Y*b.Y) * c / 12
		m11 += (a.X*b.Y + 2*a.X*a.Y + 2*b.X*b.Y + b.X*a.Y) * c / 24
	}
	return
}

// TestPolyMomentsSquare: the unit square has ∫1 = 1, ∫x = ∫y = ½, ∫x² = ∫y² = ⅓,
// ∫xy = ¼ (calculus), and a right triangle (0,0),(1,0),(0,1) ∫xy = 1/24.
func TestPolyMomentsSquare(t *testing.T) {
	sq := []r3.Vec{{}, {X: 1}, {X: 1, Y: 1}, {Y: 1}}
	a, x, y, xx, xy, yy := polyMoments(sq)
	got := []float64{a, x, y, xx, xy, yy}
	want := []float64{1, 0.5, 0.5, 1.0 / 3, 0.25, 1.0 / 3}
	for i := range got {
		if math.Abs(got[i]-want[i]) > 1e-15 {
			t.Errorf("moment %d of the unit square = %g, want %g", i, got[i], want[i])
		}
	}
	if _, _, _, _, xy, _ := polyMoments([]r3.Vec{{}, {X: 1}, {Y: 1}}); math.Abs(xy-1.0/24) > 1e-16 {
		t.Errorf("∫xy over the unit right triangle = %g, want 1/24", xy)
	}
}

// mean returns the exact mean of f over cell c of m (non-periodic plane).
func (f planeField) mean(m *grids.Mesh, c int) float64 {
	var buf [8]r3.Vec
	a, x, y, xx, xy, yy := polyMoments(m.CellPoints(c, buf[:0]))
	return (f[0]*a + f[1]*x + f[2]*y + f[3]*xx + f[4]*xy + f[5]*yy) / a
}

// feTol: properties that hold exactly in exact arithmetic (rows sum to 1, exact means of
// polynomials the space contains, conservation) are held to 1e-13 relative: sums of
// ≤ 9·(pieces) terms of size O(1) with quadrature weights summing to the piece area.
const feTol = 1e-13

// feDefects returns the worst |row sum − 1| over covered targets and the worst
// |Σ_t A_t W_ti − μ_i| / (mean source cell area) over all DOFs.
func feDefects(w *weights.Map, mu []float64, src *grids.Mesh) (rows, cols float64) {
	rs := make([]float64, w.W.Rows)
	w.W.RowSumsTo(rs)
	for t, r := range rs {
		if w.Target.Coverage != nil && w.Target.Coverage[t] == 0 {
			continue
		}
		rows = math.Max(rows, math.Abs(r-1))
	}
	cs := make([]float64, w.W.Cols)
	w.W.ColSumsTo(cs, w.Target.Measure)
	meanA := src.TotalArea() / float64(src.NumCells())
	for i := range cs {
		cols = math.Max(cols, math.Abs(cs[i]-mu[i])/meanA)
	}
	return
}

// TestFEPlaneExact: on the plane the dg1 (P1/Q1) and cg2 (P2/Q2) interpolants of
// polynomials in their space are the polynomials themselves, so the footprint means
// must be the exact means (Green's-theorem moments, Steger 1996): constants and linear
// fields for dg1, quadratics for cg2; rows sum to 1; column sums give the basis
// integrals (conservation) and Σ_t A_t (W f)_t = ∫ f over the domain (calculus).
// Targets are non-matching meshes; sources include jittered (non-parallelogram)
// quadrilaterals, where the basis is not polynomial in x, y (the sum still is).
func TestFEPlaneExact(t *testing.T) {
	ms := planeMeshes(t)
	srcs := []string{"tri=true/periodic=false", "tri=false/periodic=false", "jittered-quads", "jittered-triangles"}
	tq, err := grids.NewPlane(grids.PlaneSpec{NX: 7, NY: 4, Lx: 2, Ly: 1})
	mustMesh(t, tq, err)
	tt, err := grids.NewPlane(grids.PlaneSpec{NX: 5, NY: 6, Lx: 2, Ly: 1, Triangles: true})
	mustMesh(t, tt, err)
	tgts := map[string]*grids.Mesh{"quads7x4": tq, "tri5x6": tt, "jittered-quads": jitteredPlane(t, 6, 5, 2, 0.22, false, 9)}
	fields := map[string]planeField{
		"constant":  {1.7},
		"linear":    {0.3, 1.7, -0.9},
		"quadratic": {0.5, 1, -1, 0.7, -1.1, 0.4},
	}
	for _, sn := range srcs {
		src := ms[sn]
		for tn, tgt := range tgts {
			for _, space := range []grids.HLocation{grids.DG1, grids.CG2} {
				t.Run(fmt.Sprintf("%v/%s→%s", space, sn, tn), func(t *testing.T) {
					w, err := BuildFESpace(src, space, tgt, Options{})
					if err != nil {
						t.Fatal(err)
					}
					mu, err := FESpaceMeasure(src, space)
					if err != nil {
						t.Fatal(err)
					}
					rows, cols := feDefects(w, mu, src)
					if rows > feTol || cols > feTol {
						t.Errorf("row-sum defect %.3g, conservation defect %.3g (of a cell area)", rows, cols)
					}
					nodes, err := FESpaceNodes(src, space)
					if err != nil {
						t.Fatal(err)
					}
					for fn, f := range fields {
						if fn == "quadratic" && space == grids.DG1 {
							continue
						}
						x := make([]float64, len(nodes))
						for i, p := range nodes {
							x[i] = f.at(p)
						}
						y := applyMap(w, x)
						worst := 0.0
						for c := range y {
							worst = math.Max(worst, math.Abs(y[c]-f.mean(tgt, c)))
						}
						// ∫ f over [0,2]×[0,1] from the moments of the rectangle.
						exact := rectIntegral(f, 2, 1)
						gotT := weights.Dot(tgt.CellArea, y)
						gotS := weights.Dot(mu, x)
						if worst > feTol*2 || math.Abs(gotT-exact) > feTol*exact || math.Abs(gotS-exact) > feTol*exact {
							t.Errorf("%s: worst mean error %.3g; integral on targets %.16g, from μ %.16g, exact %.16g", fn, worst, gotT, gotS, exact)
						}
					}
				})
			}
		}
	}
}

// rectIntegral returns ∫ f over [0, lx] × [0, ly] (calculus).
func rectIntegral(f planeField, lx, ly float64) float64 {
	return f[0]*lx*ly + f[1]*lx*lx/2*ly + f[2]*lx*ly*ly/2 + f[3]*lx*lx*lx/3*ly + f[4]*lx*lx/2*ly*ly/2 + f[5]*lx*ly*ly*ly/3
}

// TestFEMeasureValues: the basis integrals of standard elements (common finite-element
// facts, derivable by integrating the Lagrange functions): P1 corners A/3; Q1 corners
// A/4 on rectangles; P2 vertices 0 and edges A/3; Q2 vertices A/36, edges A/9, centre
// 4A/9 on rectangles.
func TestFEMeasureValues(t *testing.T) {
	q, err := grids.NewPlane(grids.PlaneSpec{NX: 3, NY: 3, Lx: 3, Ly: 1.5, PeriodicX: true, PeriodicY: true})
	mustMesh(t, q, err)
	tr, err := grids.NewPlane(grids.PlaneSpec{NX: 3, NY: 3, Lx: 3, Ly: 3, PeriodicX: true, PeriodicY: true, Triangles: true})
	mustMesh(t, tr, err)
	check := func(name string, got, want float64) {
		if math.Abs(got-want) > 1e-14 {
			t.Errorf("%s = %.16g, want %.16g", name, got, want)
		}
	}
	aq := 0.5 // quad cell area
	at := 0.5 // triangle area
	mu, _ := FESpaceMeasure(q, grids.DG1)
	check("Q1 corner", mu[0], aq/4)
	mu, _ = FESpaceMeasure(tr, grids.DG1)
	check("P1 corner", mu[0], at/3)
	mu, _ = FESpaceMeasure(q, grids.CG2)
	nv, ne := q.NumVerts(), q.NumEdges()
	// Periodic: every vertex touches 4 quads, every edge 2.
	check("Q2 vertex", mu[0], 4*aq/36)
	check("Q2 edge", mu[nv], 2*aq/9)
	check("Q2 centre", mu[nv+ne], 4*aq/9)
	mu, _ = FESpaceMeasure(tr, grids.CG2)
	check("P2 vertex", mu[0], 0)
	check("P2 edge", mu[tr.NumVerts()], 2*at/3)
}

// TestFESphere: dg1 and cg2 on the cubed sphere (Q1/Q2) and on icosahedral triangles
// (P1/P2) to hexagons and to a latitude–longitude grid (whose parallels cross the source
// cells as small circles): rows sum to 1 (constants reproduced, DESIGN.md §5 consistency)
// and the column sums give the basis integrals (conservation, Σ_t A_t W_ti = μ_i), both to
// 1e-13, and the global integral of a smooth field is preserved.
func TestFESphere(t *testing.T) {
	c6, err := grids.NewCubedSphere(6, 0)
	mustMesh(t, c6, err)
	i2, err := grids.NewIcosahedral(2, 0)
	mustMesh(t, i2, err)
	h3, err := grids.NewIcosahedralDual(3, 0)
	mustMesh(t, h3, err)
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18})
	mustMesh(t, ll, err)
	for _, src := range []*grids.Mesh{c6, i2} {
		for _, tgt := range []*grids.Mesh{h3, ll} {
			for _, space := range []grids.HLocation{grids.DG1, grids.CG2} {
				t.Run(fmt.Sprintf("%v/%s→%s", space, src.Name, tgt.Name), func(t *testing.T) {
					w, err := BuildFESpace(src, space, tgt, Options{})
					if err != nil {
						t.Fatal(err)
					}
					mu, err := FESpaceMeasure(src, space)
					if err != nil {
						t.Fatal(err)
					}
					rows, cols := feDefects(w, mu, src)
					nodes, _ := FESpaceNodes(src, space)
					x := make([]float64, len(nodes))
					for i, p := range nodes {
						x[i] = analytic.Smooth(p)
					}
					y := applyMap(w, x)
					gt, gs := weights.Dot(tgt.CellArea, y), weights.Dot(mu, x)
					t.Logf("row-sum defect %.2g, conservation defect %.2g, integral defect %.2g", rows, cols, math.Abs(gt-gs)/gs)
					if rows > feTol || cols > feTol || math.Abs(gt-gs) > feTol*gs {
						t.Errorf("row-sum defect %.3g, conservation defect %.3g, integral %.16g vs %.16g", rows, cols, gt, gs)
					}
					if (w.Source.Measure == nil) != (space == grids.CG2 && src == i2) {
						t.Errorf("source measure present = %v", w.Source.Measure != nil)
					}
				})
			}
		}
	}
}

// TestFESphereConvergence: footprint means of the smooth field 2 + cos²φ cos 2λ
// (REFERENCES.md, Ullrich & Taylor-style test field [M]) from its dg1 and cg2 interpolants
// on the cubed sphere, against the exact means (Gauss–Legendre quadrature,
// conserve/analytic) on hexagonal columns of matching resolution: second order (dg1) and
// third order (cg2) are expected for degree-1 and degree-2 interpolants (REFERENCES.md:
// degree p about order p+1). The finest level runs only without -short.
func TestFESphereConvergence(t *testing.T) {
	ns, ls := []int{6, 12, 24}, []int{2, 3, 4}
	if testing.Short() {
		ns, ls = ns[:2], ls[:2]
	}
	want := map[grids.HLocation]float64{grids.DG1: 1.8, grids.CG2: 2.7} // order p+1 less 0.2–0.3 of pre-asymptotic slack
	for _, space := range []grids.HLocation{grids.DG1, grids.CG2} {
		var errs, hs []float64
		for k := range ns {
			src, err := grids.NewCubedSphere(ns[k], 0)
			mustMesh(t, src, err)
			tgt, err := grids.NewIcosahedralDual(ls[k], 0)
			mustMesh(t, tgt, err)
			w, err := BuildFESpace(src, space, tgt, Options{})
			if err != nil {
				t.Fatal(err)
			}
			nodes, _ := FESpaceNodes(src, space)
			x := make([]float64, len(nodes))
			for i, p := range nodes {
				x[i] = analytic.Smooth(p)
			}
			y := applyMap(w, x)
			ex := exactMeans(tgt, analytic.Smooth, 8)
			var num, den float64
			for c := range y {
				num += tgt.CellArea[c] * (y[c] - ex[c]) * (y[c] - ex[c])
				den += tgt.CellArea[c] * ex[c] * ex[c]
			}
			errs = append(errs, math.Sqrt(num/den))
			hs = append(hs, meanSpacing(src))
		}
		o := orders(errs, hs)
		t.Logf("%v: relative L2 errors %.3g, orders %.2f", space, errs, o)
		for _, x := range o {
			if x < want[space] {
				t.Errorf("%v: order %.2f < %g", space, x, want[space])
			}
		}
	}
}

// feResidue returns the largest |Σ_pieces ∫_p φ_i − ∫_cell φ_i| / A_cell over all cells of
// src and local functions i: the disagreement of two quadratures of the same integral,
// an estimate of the quadrature error that BuildFESpace corrects.
func feResidue(t *testing.T, src *grids.Mesh, space grids.HLocation, tgt *grids.Mesh) float64 {
	bs, err := feBases(src, space)
	if err != nil {
		t.Fatal(err)
	}
	rule := newFERule(feGaussPoints)
	sums := make([][9]float64, src.NumCells())
	visit := func(_ int, s, _ int, poly []PolyVertex) {
		bs[s].integrate(sums[s][:], poly, &rule, newFEScratch())
	}
	if _, err := ComputeOverlaps(src, tgt, OverlapOptions{Visit: visit}); err != nil {
		t.Fatal(err)
	}
	_, cell := feMeasure(src, space, bs)
	worst := 0.0
	for c, b := range bs {
		a := src.CellArea[c] / (src.Scale() * src.Scale())
		for i := range b.n {
			worst = math.Max(worst, math.Abs(sums[c][i]-cell[c][i])/a)
		}
	}
	return worst
}

// TestFEQuadratureResidue bounds the quadrature error the residue correction removes (the
// numbers BuildFESpace's documentation states): zero to rounding for triangles and
// parallelograms on the plane (the rule is exact for their polynomial bases), small on
// the sphere and on skewed quadrilaterals, and falling fast with cell size.
func TestFEQuadratureResidue(t *testing.T) {
	ms := planeMeshes(t)
	tq, err := grids.NewPlane(grids.PlaneSpec{NX: 7, NY: 4, Lx: 2, Ly: 1})
	mustMesh(t, tq, err)
	c6, err := grids.NewCubedSphere(6, 0)
	mustMesh(t, c6, err)
	c24, err := grids.NewCubedSphere(24, 0)
	mustMesh(t, c24, err)
	i2, err := grids.NewIcosahedral(2, 0)
	mustMesh(t, i2, err)
	h3, err := grids.NewIcosahedralDual(3, 0)
	mustMesh(t, h3, err)
	h5, err := grids.NewIcosahedralDual(5, 0)
	mustMesh(t, h5, err)
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18})
	mustMesh(t, ll, err)
	cases := []struct {
		name     string
		src, tgt *grids.Mesh
		bound    float64 // measured value rounded up (regression bound, not a theorem)
	}{
		{"plane triangles", ms["jittered-triangles"], tq, 1e-14},
		{"plane rectangles", ms["tri=false/periodic=false"], tq, 1e-14},
		{"plane skewed quads", ms["jittered-quads"], tq, 2e-5},
		{"sphere triangles 2→hex", i2, h3, 1e-9},
		{"sphere triangles 2→lat-lon", i2, ll, 1e-9},
		{"cubed 6→hex", c6, h3, 1e-6},
		{"cubed 6→lat-lon", c6, ll, 1e-6},
		{"cubed 24→hex 5", c24, h5, 1e-9},
	}
	for _, c := range cases {
		for _, space := range []grids.HLocation{grids.DG1, grids.CG2} {
			r := feResidue(t, c.src, space, c.tgt)
			t.Logf("%s %v: residue %.2g of a cell area", c.name, space, r)
			if r > c.bound {
				t.Errorf("%s %v: residue %.3g > %g", c.name, space, r, c.bound)
			}
		}
	}
}
