package grids

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// MeshSpec describes a mesh by its vertices and cells; Build derives edges, vertex–cell
// adjacency and geometry from it.
type MeshSpec struct {
	Name                 string
	Surface              Surface
	Radius               float64 // sphere; 0 means EarthRadius
	Lx, Ly               float64 // plane
	PeriodicX, PeriodicY bool

	Verts     []r3.Vec
	CellStart []int32
	CellVerts []int32
	// CellEdgeKinds, if not nil, parallels CellVerts: the curve of local edge k of each
	// cell (from vertex k to vertex k+1). Both cells of an edge must agree.
	CellEdgeKinds []EdgeKind
}

// MeshError reports a problem with the data describing a mesh.
type MeshError struct {
	Cell int // -1 when not about one cell
	Msg  string
}

func (e *MeshError) Error() string {
	if e.Cell >= 0 {
		return fmt.Sprintf("cell %d: %s", e.Cell, e.Msg)
	}
	return e.Msg
}

func meshErr(cell int, format string, args ...any) error {
	return &MeshError{Cell: cell, Msg: fmt.Sprintf(format, args...)}
}

// Build checks the spec and returns the complete mesh: edges numbered in the order cells
// first meet them (so output is deterministic), vertex–cell lists in counter-clockwise
// order, and all geometry. It returns a *MeshError for inconsistent data: out-of-range or
// repeated vertices, fewer than three vertices in a cell, an edge used twice in the same
// direction (inconsistent orientation) or by more than two cells, clockwise or degenerate
// cells. Build does not modify the spec's slices and the mesh keeps them.
func Build(s MeshSpec) (*Mesh, error) {
	m := &Mesh{
		Name: s.Name, Surface: s.Surface, Radius: s.Radius,
		Lx: s.Lx, Ly: s.Ly, PeriodicX: s.PeriodicX, PeriodicY: s.PeriodicY,
		Verts: s.Verts, CellStart: s.CellStart, CellVerts: s.CellVerts,
	}
	switch s.Surface {
	case Sphere:
		if m.Radius == 0 {
			m.Radius = EarthRadius
		}
		if !(m.Radius > 0) || math.IsInf(m.Radius, 0) {
			return nil, meshErr(-1, "sphere radius %g is not a positive number", m.Radius)
		}
		m.Lx, m.Ly, m.PeriodicX, m.PeriodicY = 0, 0, false, false
	case Plane:
		if (s.PeriodicX && !(s.Lx > 0)) || (s.PeriodicY && !(s.Ly > 0)) {
			return nil, meshErr(-1, "a periodic plane needs positive lengths, have lx=%g ly=%g", s.Lx, s.Ly)
		}
		m.Radius = 0
	default:
		return nil, meshErr(-1, "unknown surface %v", s.Surface)
	}
	if err := m.checkCells(s.CellEdgeKinds); err != nil {
		return nil, err
	}
	if err := m.buildEdges(s.CellEdgeKinds); err != nil {
		return nil, err
	}
	m.computeGeometry()
	if err := m.checkGeometry(); err != nil {
		return nil, err
	}
	return m, nil
}

func (m *Mesh) checkCells(kinds []EdgeKind) error {
	nc := len(m.CellStart) - 1
	if nc < 1 {
		return meshErr(-1, "the mesh has no cells")
	}
	if m.CellStart[0] != 0 || int(m.CellStart[nc]) != len(m.CellVerts) {
		return meshErr(-1, "cell offsets do not span the %d cell-vertex entries", len(m.CellVerts))
	}
	if kinds != nil && len(kinds) != len(m.CellVerts) {
		return meshErr(-1, "%d edge kinds for %d cell-vertex entries", len(kinds), len(m.CellVerts))
	}
	nv := int32(len(m.Verts))
	for c := 0; c < nc; c++ {
		lo, hi := m.CellStart[c], m.CellStart[c+1]
		if hi-lo < 3 {
			return meshErr(c, "has %d vertices; a cell needs at least 3", hi-lo)
		}
		for k := lo; k < hi; k++ {
			v := m.CellVerts[k]
			if v < 0 || v >= nv {
				return meshErr(c, "vertex index %d out of range [0, %d)", v, nv)
			}
			for j := lo; j < k; j++ {
				if m.CellVerts[j] == v {
					return meshErr(c, "vertex %d appears twice", v)
				}
			}
			if kinds != nil && kinds[k] == Parallel {
				if m.Surface != Sphere {
					return meshErr(c, "parallel (constant-latitude) edges exist only on the sphere")
				}
				w := m.CellVerts[lo+(k-lo+1)%(hi-lo)]
				if m.Verts[v].Z != m.Verts[w].Z {
					return meshErr(c, "parallel edge %d-%d joins different latitudes (z %g and %g)", v, w, m.Verts[v].Z, m.Verts[w].Z)
				}
			}
		}
	}
	for v, p := range m.Verts {
		if m.Surface == Sphere && math.Abs(r3.Norm2(p)-1) > 1e-12 {
			return meshErr(-1, "vertex %d is not a unit vector (|p|² = %.17g)", v, r3.Norm2(p))
		}
		if math.IsNaN(p.X+p.Y+p.Z) || math.IsInf(p.X+p.Y+p.Z, 0) {
			return meshErr(-1, "vertex %d has a non-finite coordinate", v)
		}
	}
	return nil
}

// buildEdges derives edges, cell edges and counter-clockwise vertex–cell lists from the
// half-edges (cell corners). Half-edge h is the corner CellVerts[h] and the edge leaving it.
func (m *Mesh) buildEdges(kinds []EdgeKind) error {
	nc, nv, nh := m.NumCells(), len(m.Verts), len(m.CellVerts)
	halfCell := make([]int32, nh)
	next := make([]int32, nh)
	prev := make([]int32, nh)
	for c := 0; c < nc; c++ {
		lo, hi := m.CellStart[c], m.CellStart[c+1]
		for h := lo; h < hi; h++ {
			halfCell[h] = int32(c)
			next[h] = h + 1
			prev[h] = h - 1
		}
		next[hi-1] = lo
		prev[lo] = hi - 1
	}
	// Outgoing half-edges per vertex, CSR.
	outStart := make([]int32, nv+1)
	for _, v := range m.CellVerts {
		outStart[v+1]++
	}
	for v := 0; v < nv; v++ {
		outStart[v+1] += outStart[v]
	}
	out := make([]int32, nh)
	fill := make([]int32, nv)
	copy(fill, outStart[:nv])
	for h, v := range m.CellVerts {
		out[fill[v]] = int32(h)
		fill[v]++
	}
	fill = nil

	twin := make([]int32, nh)
	for i := range twin {
		twin[i] = -2 // not yet visited
	}
	m.CellEdges = make([]int32, nh)
	m.EdgeVerts = make([][2]int32, 0, nh/2+nv)
	m.EdgeCells = make([][2]int32, 0, nh/2+nv)
	var edgeKinds []EdgeKind
	if kinds != nil {
		edgeKinds = make([]EdgeKind, 0, nh/2+nv)
	}
	for h := 0; h < nh; h++ {
		if twin[h] != -2 {
			continue
		}
		a, b := m.CellVerts[h], m.CellVerts[next[h]]
		// Another half-edge a→b means two cells disagree on orientation.
		for _, g := range out[outStart[a]:outStart[a+1]] {
			if int(g) != h && m.CellVerts[next[g]] == b {
				return meshErr(int(halfCell[g]), "edge %d→%d is also used in the same direction by cell %d: orientations disagree", a, b, halfCell[h])
			}
		}
		t := int32(-1)
		for _, g := range out[outStart[b]:outStart[b+1]] {
			if m.CellVerts[next[g]] == a {
				if t >= 0 {
					return meshErr(int(halfCell[g]), "edge %d–%d is shared by more than two cells", a, b)
				}
				t = g
			}
		}
		e := int32(len(m.EdgeVerts))
		twin[h] = t
		m.CellEdges[h] = e
		right := int32(-1)
		if t >= 0 {
			twin[t] = int32(h)
			m.CellEdges[t] = e
			right = halfCell[t]
			if kinds != nil && kinds[t] != kinds[h] {
				return meshErr(int(right), "edge %d–%d is %v in cell %d but %v here", a, b, kinds[h], halfCell[h], kinds[t])
			}
		}
		m.EdgeVerts = append(m.EdgeVerts, [2]int32{a, b})
		m.EdgeCells = append(m.EdgeCells, [2]int32{halfCell[h], right})
		if kinds != nil {
			edgeKinds = append(edgeKinds, kinds[h])
		}
	}
	if kinds != nil {
		for _, k := range edgeKinds {
			if k != GreatArc {
				m.EdgeKinds = edgeKinds
				break
			}
		}
	}

	// Vertex–cell lists, counter-clockwise: from a corner, the next cell counter-clockwise
	// about the vertex lies across the edge that enters the corner.
	m.VertStart = outStart
	m.VertCells = make([]int32, nh)
	m.vertCorners = make([]int32, nh)
	for v := 0; v < nv; v++ {
		corners := out[outStart[v]:outStart[v+1]]
		if len(corners) == 0 {
			return meshErr(-1, "vertex %d belongs to no cell", v)
		}
		// Start at the clockwise-most corner on a boundary (its leaving edge has no twin),
		// else at the corner of the lowest-numbered cell (out is in cell order).
		start := corners[0]
		for _, g := range corners {
			if twin[g] < 0 {
				start = g
				break
			}
		}
		k := outStart[v]
		h := start
		for {
			m.VertCells[k] = halfCell[h]
			m.vertCorners[k] = h
			k++
			t := twin[prev[h]]
			if t < 0 || t == start {
				break
			}
			if k == outStart[v+1] {
				return meshErr(-1, "the cells around vertex %d do not form one fan (non-manifold vertex)", v)
			}
			h = t
		}
		if k != outStart[v+1] {
			return meshErr(-1, "the cells around vertex %d do not form one fan (non-manifold vertex)", v)
		}
	}
	return nil
}
