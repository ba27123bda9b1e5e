package remap

import (
	"github.com/colbridge/colbridge/weights"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
)

// planeField is a polynomial of degree ≤ 2 on the plane: c0 + c1 x + c2 y + c3 x² + c4 xy + c5 y².
type planeField [6]float64

func (f planeField) at(p r3.Vec) float64 {
	return f[0] + f[1]*p.X + f[2]*p.Y + f[3]*p.X*p.X + f[4]*p.X*p.Y + f[5]*p.Y*p.Y
}

// vertexMeshes returns sphere and plane meshes for the vertex tests, including a
// latitude–longitude grid (Parallel edges) and a hexagonal mesh.
func vertexMeshes(t *testing.T) map[string]*grids.Mesh {
	out := map[string]*grids.Mesh{}
	for name, m := range planeMeshes(t) {
		out["plane/"+name] = m
	}
	c8, err := grids.NewCubedSphere(8, 0)
	out["cubed8"] = mustMesh(t, c8, err)
	h3, err := grids.NewIcosahedralDual(3, 0)
	out["hex3"] = mustMesh(t, h3, err)
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 24, NLat: 12})
	out["latlon"] = mustMesh(t, ll, err)
	return out
}

// TestKites: the kites partition both the cells and the barycentric dual cells: their sums
// per cell are CellArea and per vertex DualArea (grids' definition of DualArea), to
// rounding (1e-13 relative).
func TestKites(t *testing.T) {
	for name, m := range vertexMeshes(t) {
		k := Kites(m)
		perVert := make([]weights.Accumulator, m.NumVerts())
		worst := 0.0
		for c := 0; c < m.NumCells(); c++ {
			var s weights.Accumulator
			for h := m.CellStart[c]; h < m.CellStart[c+1]; h++ {
				s.Add(k[h])
				perVert[m.CellVerts[h]].Add(k[h])
				if !(k[h] > 0) {
					t.Errorf("%s: kite %d of cell %d is %g", name, h, c, k[h])
				}
			}
			worst = math.Max(worst, math.Abs(s.Sum()-m.CellArea[c])/m.CellArea[c])
		}
		for v := range perVert {
			worst = math.Max(worst, math.Abs(perVert[v].Sum()-m.DualArea[v])/m.DualArea[v])
		}
		if worst > exactTol {
			t.Errorf("%s: kites miss the cell or dual areas by %.3g", name, worst)
		}
	}
}

// TestVertexCellProperties: vertex → cell and cell → vertex are consistent and
// conservative (DESIGN.md §5 definitions) to 1e-13 with positive weights, and each is the
// adjoint of the other (W* = M_s⁻¹ Wᵀ M_t with dual and cell areas, DESIGN.md §5).
func TestVertexCellProperties(t *testing.T) {
	for name, m := range vertexMeshes(t) {
		t.Run(name, func(t *testing.T) {
			vc, err := CellFromVertices(m)
			if err != nil {
				t.Fatal(err)
			}
			cv, err := VerticesFromCells(m)
			if err != nil {
				t.Fatal(err)
			}
			c1, k1 := defects(vc)
			c2, k2 := defects(cv)
			if c1 > propTol || k1 > propTol || c2 > propTol || k2 > propTol {
				t.Errorf("defects: vertex→cell conservation %.3g consistency %.3g; cell→vertex %.3g %.3g", c1, k1, c2, k2)
			}
			for _, v := range append(append([]float64{}, vc.W.Values...), cv.W.Values...) {
				if !(v > 0) {
					t.Fatalf("non-positive weight %g", v)
				}
			}
			adj, err := Adjoint(vc)
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i := 0; i < cv.W.Rows; i++ {
				for p := cv.W.RowStart[i]; p < cv.W.RowStart[i+1]; p++ {
					worst = math.Max(worst, math.Abs(adj.W.At(i, int(cv.W.ColIndex[p]))-cv.W.Values[p]))
				}
			}
			if worst > 1e-15 || adj.W.NNZ() != cv.W.NNZ() {
				t.Errorf("cell→vertex differs from the adjoint of vertex→cell by %.3g", worst)
			}
		})
	}
}

// TestVertexCellLinear: on planar triangles every kite is A/3 (the medians cut a triangle
// into six equal areas) and on rectangles A/4, so the kite average of a linear field's
// corner values is its value at the centroid (derived): exact to rounding.
func TestVertexCellLinear(t *testing.T) {
	f := planeField{0.4, -1.3, 2.2}
	for _, name := range []string{"tri=true/periodic=false", "tri=false/periodic=false", "jittered-triangles"} {
		m := planeMeshes(t)[name]
		vc, err := CellFromVertices(m)
		if err != nil {
			t.Fatal(err)
		}
		x := make([]float64, m.NumVerts())
		for v, p := range m.Verts {
			x[v] = f.at(p)
		}
		y := applyMap(vc, x)
		worst := 0.0
		for c := range y {
			worst = math.Max(worst, math.Abs(y[c]-f.at(m.CellCentroid[c])))
		}
		if worst > exactTol*4 {
			t.Errorf("%s: linear field off by %.3g", name, worst)
		}
	}
}

// TestVertexCellTC2: the stream function of Williamson et al. (1992) test case 2
// (α = 0.05; conserve/analytic) at the vertices, averaged to the cells, against its value
// at the column points: first order or better on the cubed sphere and the hexagons.
func TestVertexCellTC2(t *testing.T) {
	tc := analytic.TC2{Alpha: 0.05}
	gens := map[string]func(k int) (*grids.Mesh, error){
		"cubed":    func(k int) (*grids.Mesh, error) { return grids.NewCubedSphere(12<<k, 0) },
		"hexagons": func(k int) (*grids.Mesh, error) { return grids.NewIcosahedralDual(3+k, 0) },
	}
	for name, gen := range gens {
		var errs, hs []float64
		for k := range 3 {
			m, err := gen(k)
			mustMesh(t, m, err)
			vc, err := CellFromVertices(m)
			if err != nil {
				t.Fatal(err)
			}
			x := make([]float64, m.NumVerts())
			for v, p := range m.Verts {
				x[v] = tc.StreamFunction(p)
			}
			y := applyMap(vc, x)
			var num, den float64
			for c := range y {
				d := y[c] - tc.StreamFunction(m.CellCentroid[c])
				num += m.CellArea[c] * d * d
				den += m.CellArea[c] * analytic.EarthRadius * analytic.TC2U0 * analytic.EarthRadius * analytic.TC2U0
			}
			errs = append(errs, math.Sqrt(num/den))
			hs = append(hs, meanSpacing(m))
		}
		o := orders(errs, hs)
		t.Logf("%s: L2 errors %.3g relative to a·u₀ (the scale of ψ), orders %.2f", name, errs, o)
		for _, x := range o {
			if x < minOrder {
				t.Errorf("%s: order %.2f < %g", name, x, minOrder)
			}
		}
	}
}
