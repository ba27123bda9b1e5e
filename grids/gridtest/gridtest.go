// Package gridtest is the contract every colbridge mesh satisfies: every generator and every
// reader runs Check in its tests, so a new mesh source is held to the same topology and
// geometry facts as the old ones.
package gridtest

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
)

// Tolerances of the contract.
const (
	// AreaTol: total area against the exact surface (4πR², Lx·Ly). The bound;
	// compensated sums of exact cell areas reach about 1e-15.
	AreaTol = 1e-12
	// DualTol: the dual areas are an exact partition of the cells; only rounding differs.
	DualTol = 1e-12
	// ClosureTol: Σ_e l_e n_e over a cell's edges, relative to its perimeter; exactly zero
	// for planar polygons (divergence theorem), O(h²) on the sphere where edges bend, so
	// it is checked on the plane only.
	ClosureTol = 1e-12
)

// EulerCharacteristic returns V − E + F for a mesh of this kind, 2 − 2g − b for an
// orientable surface of genus g with b boundary loops: 2 on the closed sphere, 1 on a
// regional (disk-like) part of it or a plane disk, 0 on the torus (periodic in x and y)
// and the cylinder (periodic in one direction: two boundary loops).
func EulerCharacteristic(m *grids.Mesh) int {
	g := 0
	if m.Surface == grids.Plane && m.PeriodicX && m.PeriodicY {
		g = 1
	}
	return 2 - 2*g - BoundaryLoops(m)
}

// BoundaryLoops counts the closed loops formed by boundary edges (edges with one cell).
func BoundaryLoops(m *grids.Mesh) int {
	next := map[int32]int32{}
	for e := 0; e < m.NumEdges(); e++ {
		if m.EdgeCells[e][1] < 0 {
			next[m.EdgeVerts[e][0]] = m.EdgeVerts[e][1]
		}
	}
	seen := map[int32]bool{}
	loops := 0
	for v := range next {
		if seen[v] {
			continue
		}
		loops++
		for w := v; !seen[w]; w = next[w] {
			seen[w] = true
		}
	}
	return loops
}

// ExactArea returns the area the mesh must cover: 4πR² on the closed sphere, Lx·Ly on the
// plane; 0 (unknown) for a regional part of the sphere or a plane mesh without lengths.
func ExactArea(m *grids.Mesh) float64 {
	if m.Surface == grids.Sphere {
		if BoundaryLoops(m) > 0 {
			return 0
		}
		return 4 * math.Pi * m.Radius * m.Radius
	}
	return m.Lx * m.Ly
}

// Check runs the mesh contract: Euler characteristic, total area, positive (counter-
// clockwise, non-degenerate) cells, edge–cell–vertex consistency, normal orientation,
// counter-clockwise vertex fans, and dual areas summing to the cell areas.
func Check(t testing.TB, m *grids.Mesh) {
	t.Helper()
	nv, ne, nc := m.NumVerts(), m.NumEdges(), m.NumCells()
	if chi := nv - ne + nc; chi != EulerCharacteristic(m) {
		t.Errorf("%s: V − E + F = %d − %d + %d = %d, want %d", m.Name, nv, ne, nc, chi, EulerCharacteristic(m))
	}
	exact := ExactArea(m)
	if rel := math.Abs(m.TotalArea()-exact) / exact; exact > 0 && rel > AreaTol {
		t.Errorf("%s: total area %.17g, want %.17g (relative error %.3g > %g)", m.Name, m.TotalArea(), exact, rel, AreaTol)
	}
	dual := 0.0
	for _, a := range m.DualArea {
		if !(a > 0) {
			t.Errorf("%s: a dual area is %g", m.Name, a)
			break
		}
		dual += a
	}
	if rel := math.Abs(dual-m.TotalArea()) / m.TotalArea(); rel > DualTol {
		t.Errorf("%s: dual areas sum to %.17g, cells to %.17g (relative %.3g)", m.Name, dual, m.TotalArea(), rel)
	}
	for c := 0; c < nc; c++ {
		if !(m.CellArea[c] > 0) {
			t.Errorf("%s: cell %d has area %g", m.Name, c, m.CellArea[c])
			return
		}
		vs, es := m.CellVertices(c), m.CellEdgeList(c)
		var closure r3.Vec
		perim := 0.0
		for k, e := range es {
			a, b := vs[k], vs[(k+1)%len(vs)]
			ev := m.EdgeVerts[e]
			ec := m.EdgeCells[e]
			switch {
			case ev == [2]int32{a, b} && ec[0] == int32(c):
			case ev == [2]int32{b, a} && ec[1] == int32(c):
			default:
				t.Errorf("%s: cell %d edge %d (%d→%d) has vertices %v and cells %v", m.Name, c, e, a, b, ev, ec)
				return
			}
			closure = r3.Add(closure, r3.Scale(m.EdgeSign(c, int(e))*m.EdgeLength[e], m.EdgeNormal[e]))
			perim += m.EdgeLength[e]
		}
		if m.Surface == grids.Plane && r3.Norm(closure) > ClosureTol*perim {
			t.Errorf("%s: cell %d: Σ l n = %v, not closed", m.Name, c, closure)
			return
		}
	}
	for e := 0; e < ne; e++ {
		if !(m.EdgeLength[e] > 0) {
			t.Errorf("%s: edge %d has length %g", m.Name, e, m.EdgeLength[e])
			return
		}
		l, r := m.EdgeCells[e][0], m.EdgeCells[e][1]
		if r < 0 {
			continue
		}
		// The normal points from the left cell's centroid towards the right one's.
		gl, gr := m.CellCentroid[l], m.Unwrap(m.CellCentroid[r], m.CellCentroid[l])
		if r3.Dot(m.EdgeNormal[e], r3.Sub(gr, gl)) <= 0 {
			t.Errorf("%s: edge %d normal %v does not point from cell %d to cell %d", m.Name, e, m.EdgeNormal[e], l, r)
			return
		}
		if n := r3.Norm(m.EdgeNormal[e]); math.Abs(n-1) > 1e-14 {
			t.Errorf("%s: edge %d normal has length %v", m.Name, e, n)
			return
		}
	}
	for v := 0; v < nv; v++ {
		cells := m.VertexCells(v)
		for i, c := range cells {
			found := false
			for _, w := range m.CellVertices(int(c)) {
				found = found || int(w) == v
			}
			if !found {
				t.Errorf("%s: vertex %d lists cell %d which does not contain it", m.Name, v, c)
				return
			}
			// Counter-clockwise: consecutive cells share an edge through v.
			if i > 0 && !shareEdge(m, int(cells[i-1]), int(c), v) {
				t.Errorf("%s: vertex %d: cells %d and %d are consecutive but share no edge", m.Name, v, cells[i-1], c)
				return
			}
		}
	}
}

func shareEdge(m *grids.Mesh, a, b, v int) bool {
	for _, e := range m.CellEdgeList(a) {
		ec, ev := m.EdgeCells[e], m.EdgeVerts[e]
		if (ec[0] == int32(b) || ec[1] == int32(b)) && (ev[0] == int32(v) || ev[1] == int32(v)) {
			return true
		}
	}
	return false
}
