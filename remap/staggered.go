package remap

// Staggered maps: the horizontal part of coupling a staggered dynamical core to physics
// columns. The files of this concept are
//
//   - staggered.go: method names, the edge inner product (EdgeMeasure), the sides of
//     staggered locations, composition of maps (Compose) and sparse helpers;
//   - vector.go: edge-normal and edge-tangential components → cell vectors (Perot 2000),
//     the east/north projection at column points, and the whole restriction to column
//     winds (ColumnWinds);
//   - vector_average.go: the plain-averaging prolongation of column winds to edge-normal
//     components, kept for comparison with the adjoint;
//   - staggered_vertex.go: vertex ↔ cell by the barycentric kites of the dual mesh;
//   - staggered_columns.go: scalar locations → columns in one call (ScalarToColumns);
//   - adjoint.go: the adjoint of any map with respect to the two sides' measures;
//   - fespace.go, fespace_quad.go: dg1 and cg2 fields → footprint means by quadrature of
//     their basis over the supermesh.
//
// Restriction maps go from the dynamics locations to cells (the columns); prolongation of
// increments goes back by Adjoint unless said otherwise (DESIGN.md §4–5).

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
	"github.com/colbridge/colbridge/weights"
)

// Method names of the staggered maps (weights.Map.Method).
const (
	// Perot is the edge-normal → cell vector reconstruction of Perot (2000).
	Perot = "perot"
	// PerotTangential is the same reconstruction from edge-tangential components.
	PerotTangential = "perot-tangential"
	// KiteAverage is vertex ↔ cell through the barycentric kites (dual-area pieces).
	KiteAverage = "kite-average"
	// FEQuadrature is dg1/cg2 → footprint means by quadrature of the basis.
	FEQuadrature = "fe-quadrature"
	// AdjointMethod marks a map made by Adjoint; Attrs["adjoint_of"] names the original.
	AdjointMethod = "adjoint"
	// EdgeAverage is cell vector → edge-normal by averaging the two cells of each edge.
	EdgeAverage = "edge-average"
)

// Component names stored in Attrs["component"] of vector-component maps.
const (
	CompX     = "x"
	CompY     = "y"
	CompZ     = "z"
	CompEast  = "east"
	CompNorth = "north"
)

// EdgeMeasure returns the kinetic-energy weight of every edge, the measure of the
// edge-normal and edge-tangential spaces:
//
//	μ_e = l_e · d_e
//
// with l_e the edge length and d_e the distance between the centres (CellCentroid) of the
// edge's two cells: geodesic on the sphere (R times the angle between the centre
// directions, so μ_e is in m²), Euclidean on the plane (minimum image when periodic). Each
// of the two cells owns half of it, l_e·d_e/2 (the area of the C-grid "diamond" of the
// edge on an orthogonal mesh). A boundary edge (one cell, non-periodic plane) has only the
// inner half: μ_e = l_e·|x_e − x_c|, x_e its midpoint.
//
// Why this weight: on an orthogonal mesh (centre-to-centre segments normal to the
// edges) Σ_e μ_e u_e² approximates ∫|u|² dA for a smooth tangent vector field u and
// u_e = u·n_e (or u·t_e), the same quantity the columns' inner product
// Σ_c A_c (u_east² + u_north²) approximates. On uniform quadrilaterals the x-normal edges
// give Σ Δx Δy u² and the y-normal edges Σ Δx Δy v²; on hexagons the diamonds tile the
// surface and the mean of (u·n)² over three directions 60° apart is |u|²/2. So the
// energy the two sides exchange agrees, which is what makes the adjoint (DESIGN.md §5)
// the energy-consistent prolongation. Measured for Williamson et al. (1992) test case 2
// (α = 0, ∫|u|² dA = (8π/3) u₀² a²): relative error 1.2e-3, 2.6e-4, 4.8e-5 on the
// icosahedral dual of levels 3, 4, 5 (order 2.2–2.4).
//
// Limitation: no diagonal weight can do this on a non-orthogonal mesh (on a uniformly
// skewed mesh with two normal directions n1, n2 that are not perpendicular,
// μ1 n1⊗n1 + μ2 n2⊗n2 is never a multiple of I). On the equiangular cubed sphere, whose
// cells are skewed by up to 30° near the panel corners, Σ_e μ_e u_e² misses ∫|u|² by
// 1.1 %, 1.4 %, 1.6 % at N = 12, 24, 48: it does not converge. EdgeSkew measures how far
// a mesh is from orthogonal.
//
// μ_e > 0 for every edge of a valid mesh.
func EdgeMeasure(m *grids.Mesh) []float64 {
	mu := make([]float64, m.NumEdges())
	for e := range mu {
		c0, c1 := m.EdgeCells[e][0], m.EdgeCells[e][1]
		var d float64
		if c1 < 0 {
			d = centreDistance(m, m.CellCentroid[c0], m.EdgeMid[e])
		} else {
			d = centreDistance(m, m.CellCentroid[c0], m.CellCentroid[c1])
		}
		mu[e] = m.EdgeLength[e] * d
	}
	return mu
}

// EdgeSkew returns, for every edge, the angle (radians, in [0, π]) between the edge
// normal n_e and the direction τ_e from the centre of EdgeCells[e][0] to that of
// EdgeCells[e][1] (to the edge midpoint for a boundary edge), measured in the tangent
// plane at the edge midpoint on the sphere. It is zero on orthogonal meshes (uniform
// quadrilaterals; Voronoi meshes whose cell centres are their generators).
//
// It is what limits the adjoint of the Perot reconstruction as a prolongation: with the
// measures of this package, Adjoint(CellVectorFromEdges) takes a uniform planar vector v
// to v·τ_e, not v·n_e (derived: (W*)_{e,c} = s_{c,e}(x_e − x_c)/d_e; tested exactly), an
// error of at most 2|v| sin(skew/2) per edge. Measured maxima: 2.0° on the icosahedral
// dual (centroids are not the generators; constant under refinement), 23–28° on the
// cubed sphere N = 12–48.
func EdgeSkew(m *grids.Mesh) []float64 {
	out := make([]float64, m.NumEdges())
	for e := range out {
		c0, c1 := m.EdgeCells[e][0], m.EdgeCells[e][1]
		a := m.CellCentroid[c0]
		b := m.EdgeMid[e]
		if c1 >= 0 {
			b = m.CellCentroid[c1]
		}
		var d r3.Vec
		if m.Surface == grids.Sphere {
			d = r3.Sub(b, a)
			x := m.EdgeMid[e]
			d = r3.Sub(d, r3.Scale(r3.Dot(d, x), x))
		} else {
			d = r3.Sub(m.Unwrap(b, a), a)
			d.Z = 0
		}
		n := m.EdgeNormal[e]
		out[e] = math.Atan2(r3.Norm(r3.Cross(d, n)), r3.Dot(d, n))
	}
	return out
}

// centreDistance is the geodesic (sphere, in metres) or minimum-image Euclidean (plane)
// distance between two points of the mesh's surface.
func centreDistance(m *grids.Mesh, a, b r3.Vec) float64 {
	if m.Surface == grids.Sphere {
		return m.Radius * sphere.ArcAngle(a, b)
	}
	b = m.Unwrap(b, a)
	return math.Hypot(b.X-a.X, b.Y-a.Y)
}

// edgeSide describes the edges of m (normal or tangential components) as a map side with
// the kinetic-energy measure.
func edgeSide(m *grids.Mesh, h grids.HLocation) weights.Side {
	return weights.Side{
		MeshName:        m.Name,
		MeshFingerprint: m.Fingerprint(),
		Location:        grids.Location{H: h},
		Size:            m.NumEdges(),
		Measure:         EdgeMeasure(m),
	}
}

// vertexSide describes the vertices of m with their barycentric dual areas.
func vertexSide(m *grids.Mesh) weights.Side {
	return weights.Side{
		MeshName:        m.Name,
		MeshFingerprint: m.Fingerprint(),
		Location:        grids.Location{H: grids.Vertex},
		Size:            m.NumVerts(),
		Measure:         m.DualArea,
	}
}

// sameMesh reports whether a and b are the same mesh (same pointer or same fingerprint).
func sameMesh(a, b *grids.Mesh) bool {
	return a == b || a.Fingerprint() == b.Fingerprint()
}

// ErrMismatch is returned when two maps cannot be composed or a map does not fit a mesh.
var ErrMismatch = fmt.Errorf("maps do not fit together")

// Compose returns the map outer∘inner: first inner, then outer (matrix outer.W·inner.W,
// by weights.Mul). inner's target must be outer's source: same size, and the same
// location and mesh fingerprint where both sides record them. The result has inner's
// source and outer's target (with their measures and coverages), Method
// "<inner>+<outer>" in the order of application, Order the smaller of the two orders
// (0 if either is 0) and outer's normalisation. Neither input is modified.
func Compose(outer, inner *weights.Map) (*weights.Map, error) {
	a, b := inner.Target, outer.Source
	if a.Size != b.Size {
		return nil, fmt.Errorf("%w: inner map has %d targets, outer map %d sources", ErrMismatch, a.Size, b.Size)
	}
	if a.MeshFingerprint != "" && b.MeshFingerprint != "" && a.MeshFingerprint != b.MeshFingerprint {
		return nil, fmt.Errorf("%w: inner map ends on mesh %q (%s), outer map starts on %q (%s)", ErrMismatch, a.MeshName, a.MeshFingerprint, b.MeshName, b.MeshFingerprint)
	}
	if a.Location.H != 0 && b.Location.H != 0 && a.Location != b.Location {
		return nil, fmt.Errorf("%w: inner map ends at %v, outer map starts at %v", ErrMismatch, a.Location, b.Location)
	}
	order := min(inner.Order, outer.Order)
	m := &weights.Map{
		W:             weights.Mul(outer.W, inner.W),
		Source:        inner.Source,
		Target:        outer.Target,
		Method:        inner.Method + "+" + outer.Method,
		Order:         order,
		Normalization: outer.Normalization,
		Provenance:    outer.Provenance,
		Attrs:         mergeAttrs(inner.Attrs, outer.Attrs),
	}
	return m, m.Check()
}

// mergeAttrs returns a new map with the entries of a, then b (b wins).
func mergeAttrs(a, b map[string]string) map[string]string {
	if a == nil && b == nil {
		return nil
	}
	out := make(map[string]string, len(a)+len(b))
	for k, v := range a {
		out[k] = v
	}
	for k, v := range b {
		out[k] = v
	}
	return out
}

// rowCombine returns Σ_k diag(scale[k])·terms[k] for matrices of one shape: row i of the
// result is Σ_k scale[k][i]·(row i of terms[k]). A nil scale[k] means ones. Entries with
// the same column are summed in term order (deterministic); exact zeros from cancellation
// are kept so the sparsity pattern does not depend on the data.
func rowCombine(terms []*weights.CSR, scale [][]float64) *weights.CSR {
	rows, cols := terms[0].Rows, terms[0].Cols
	colIdx := make([][]int32, rows)
	vals := make([][]float64, rows)
	acc := make([]float64, cols)
	mark := make([]bool, cols)
	var touched []int32
	for i := 0; i < rows; i++ {
		touched = touched[:0]
		for k, w := range terms {
			if w.Rows != rows || w.Cols != cols {
				panic("remap: rowCombine: matrices of different shapes")
			}
			s := 1.0
			if scale[k] != nil {
				s = scale[k][i]
			}
			for p := w.RowStart[i]; p < w.RowStart[i+1]; p++ {
				j := w.ColIndex[p]
				if !mark[j] {
					mark[j] = true
					touched = append(touched, j)
				}
				acc[j] += s * w.Values[p]
			}
		}
		sortInt32(touched)
		ci := make([]int32, len(touched))
		vi := make([]float64, len(touched))
		for n, j := range touched {
			ci[n], vi[n] = j, acc[j]
			acc[j], mark[j] = 0, false
		}
		colIdx[i], vals[i] = ci, vi
	}
	return weights.FromRows(rows, cols, colIdx, vals)
}

// withAttr returns a copy of attrs with key set to value.
func withAttr(attrs map[string]string, key, value string) map[string]string {
	out := mergeAttrs(attrs, nil)
	if out == nil {
		out = map[string]string{}
	}
	out[key] = value
	return out
}
