package grids

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
	"github.com/colbridge/colbridge/internal/ncio"
)

// FileError is a problem with a mesh file: it names the file, the variable (if any) and
// what is wrong.
type FileError struct {
	Path, Var, Msg string
	Err            error
}

func (e *FileError) Error() string {
	s := e.Path
	if e.Var != "" {
		s += ": variable " + quote(e.Var)
	}
	s += ": " + e.Msg
	if e.Err != nil {
		s += ": " + e.Err.Error()
	}
	return s
}

func (e *FileError) Unwrap() error { return e.Err }

func quote(s string) string { return "\"" + s + "\"" }

func fileErr(path, v string, err error, format string, args ...any) error {
	return &FileError{Path: path, Var: v, Msg: fmt.Sprintf(format, args...), Err: err}
}

// ReadMesh reads a mesh file: a UGRID file (the first variable with cf_role =
// "mesh_topology" and topology_dimension 2), or a latitude–longitude grid described by CF
// coordinate variables (with bounds when present). Files colbridge wrote come back bit for
// bit (exact node vectors, edge kinds, edge numbering) and their stored fingerprint is
// checked. Faces listed clockwise are reversed. When the file lists edges, the mesh's
// edges follow the file's numbering and, for interior edges, its orientation, so edge
// fields in the model's own files line up.
func ReadMesh(path string) (*Mesh, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	topo := findTopology(f)
	if topo == "" {
		m, err := readCFLatLon(f, path)
		if err != nil {
			return nil, err
		}
		return m, nil
	}
	return readUGRID(f, path, topo)
}

func findTopology(f *ncio.File) string {
	for _, v := range f.Vars() {
		role, err := f.AttrText(v.Name, "cf_role")
		if err != nil || role != "mesh_topology" {
			continue
		}
		if d, err := f.AttrInt64s(v.Name, "topology_dimension"); err == nil && len(d) == 1 && d[0] != 2 {
			continue
		}
		return v.Name
	}
	return ""
}

// maxMeshSize bounds what the reader accepts, so a corrupt header cannot make it allocate
// without limit: 2³¹ − 1 entries per array.
const maxMeshSize = math.MaxInt32

func readUGRID(f *ncio.File, path, topo string) (*Mesh, error) {
	nodeCoords, err := f.AttrText(topo, "node_coordinates")
	if err != nil {
		return nil, fileErr(path, topo, err, "mesh topology has no node_coordinates attribute")
	}
	names := strings.Fields(nodeCoords)
	if len(names) < 2 {
		return nil, fileErr(path, topo, nil, "node_coordinates %q names fewer than two variables", nodeCoords)
	}
	fnName, err := f.AttrText(topo, "face_node_connectivity")
	if err != nil {
		return nil, fileErr(path, topo, err, "mesh topology has no face_node_connectivity (only 2-D meshes with faces are supported)")
	}
	surface := Sphere
	if s, err := f.AttrText(topo, "colbridge_surface"); err == nil {
		if surface, err = ParseSurface(s); err != nil {
			return nil, fileErr(path, topo, err, "bad colbridge_surface")
		}
	} else if u, _ := f.AttrText(names[0], "units"); !strings.HasPrefix(strings.ToLower(u), "degree") {
		sn, _ := f.AttrText(names[0], "standard_name")
		if sn != "longitude" {
			surface = Plane
		}
	}
	spec := MeshSpec{Surface: surface, Name: filepath.Base(path)}
	if s, err := f.AttrText(topo, "colbridge_name"); err == nil && s != "" {
		spec.Name = s
	}
	if surface == Sphere {
		spec.Radius = EarthRadius
		if r, err := f.AttrFloat64s(topo, "colbridge_radius"); err == nil && len(r) == 1 {
			spec.Radius = r[0]
		}
	} else {
		if l, err := f.AttrFloat64s(topo, "colbridge_lengths"); err == nil && len(l) == 2 {
			spec.Lx, spec.Ly = l[0], l[1]
		}
		if p, err := f.AttrInt64s(topo, "colbridge_periodic"); err == nil && len(p) == 2 {
			spec.PeriodicX, spec.PeriodicY = p[0] != 0, p[1] != 0
		}
	}

	// Nodes.
	xs, err := readFloats1D(f, path, names[0])
	if err != nil {
		return nil, err
	}
	ys, err := readFloats1D(f, path, names[1])
	if err != nil {
		return nil, err
	}
	if len(xs) != len(ys) {
		return nil, fileErr(path, names[1], nil, "has %d values but %s has %d", len(ys), names[0], len(xs))
	}
	nv := len(xs)
	spec.Verts = make([]r3.Vec, nv)
	xyzName, _ := f.AttrText(topo, "colbridge_node_xyz")
	if surface == Sphere && xyzName != "" {
		v, err := f.Var(xyzName)
		if err != nil {
			return nil, fileErr(path, xyzName, err, "named by colbridge_node_xyz but missing")
		}
		if len(v.Shape) != 2 || v.Shape[0] != nv || v.Shape[1] != 3 {
			return nil, fileErr(path, xyzName, nil, "has shape %v, want [%d 3]", v.Shape, nv)
		}
		buf := make([]float64, 3*nv)
		if err := f.ReadFloat64s(xyzName, nil, nil, buf); err != nil {
			return nil, err
		}
		for i := range spec.Verts {
			spec.Verts[i] = r3.Vec{X: buf[3*i], Y: buf[3*i+1], Z: buf[3*i+2]}
		}
	} else {
		for i := range spec.Verts {
			if surface == Sphere {
				spec.Verts[i] = sphere.FromLonLat(xs[i]*math.Pi/180, ys[i]*math.Pi/180)
			} else {
				spec.Verts[i] = r3.Vec{X: xs[i], Y: ys[i]}
			}
		}
	}
	for i, p := range spec.Verts {
		if math.IsNaN(p.X+p.Y+p.Z) || math.IsInf(p.X+p.Y+p.Z, 0) {
			return nil, fileErr(path, names[0], nil, "node %d has a missing or infinite coordinate", i)
		}
		if surface == Sphere && math.Abs(r3.Norm2(p)-1) > 1e-12 {
			return nil, fileErr(path, xyzName, nil, "node %d is not a unit vector", i)
		}
	}
	if surface == Plane && (spec.PeriodicX || spec.PeriodicY) {
		for i, p := range spec.Verts {
			if (spec.PeriodicX && (p.X < 0 || p.X >= spec.Lx)) || (spec.PeriodicY && (p.Y < 0 || p.Y >= spec.Ly)) {
				return nil, fileErr(path, names[0], nil, "node %d at (%g, %g) lies outside the periodic domain %g × %g", i, p.X, p.Y, spec.Lx, spec.Ly)
			}
		}
	}

	// Faces.
	faceDim, _ := f.AttrText(topo, "face_dimension")
	faces, err := readConnectivity(f, path, fnName, faceDim, nv)
	if err != nil {
		return nil, err
	}
	spec.CellStart = make([]int32, len(faces)+1)
	nfv := 0
	for _, fc := range faces {
		nfv += len(fc)
	}
	spec.CellVerts = make([]int32, 0, nfv)
	for c, fc := range faces {
		if len(fc) < 3 {
			return nil, fileErr(path, fnName, nil, "face %d has %d nodes; a face needs at least 3", c, len(fc))
		}
		if signedArea(spec, fc) < 0 {
			for i, j := 0, len(fc)-1; i < j; i, j = i+1, j-1 {
				fc[i], fc[j] = fc[j], fc[i]
			}
		}
		spec.CellVerts = append(spec.CellVerts, fc...)
		spec.CellStart[c+1] = int32(len(spec.CellVerts))
	}

	// Edges as the file lists them, and their kinds.
	var fileEdges [][2]int32
	edgeDim, _ := f.AttrText(topo, "edge_dimension")
	if enName, err := f.AttrText(topo, "edge_node_connectivity"); err == nil {
		en, err := readConnectivity(f, path, enName, edgeDim, nv)
		if err != nil {
			return nil, err
		}
		fileEdges = make([][2]int32, len(en))
		for e, p := range en {
			if len(p) != 2 {
				return nil, fileErr(path, enName, nil, "edge %d has %d nodes, want 2", e, len(p))
			}
			fileEdges[e] = [2]int32{p[0], p[1]}
		}
	}
	if kindName, err := f.AttrText(topo, "colbridge_edge_kind"); err == nil {
		if fileEdges == nil {
			return nil, fileErr(path, kindName, nil, "edge kinds need edge_node_connectivity")
		}
		k := make([]int32, len(fileEdges))
		if v, err := f.Var(kindName); err != nil || len(v.Shape) != 1 || v.Shape[0] != len(fileEdges) {
			return nil, fileErr(path, kindName, err, "want one edge kind per edge (%d)", len(fileEdges))
		}
		if err := f.ReadInt32s(kindName, nil, nil, k); err != nil {
			return nil, err
		}
		for e := range fileEdges {
			if k[e] != int32(GreatArc) && k[e] != int32(Parallel) {
				return nil, fileErr(path, kindName, nil, "edge %d has unknown kind %d", e, k[e])
			}
		}
		inc := incidence(nv, fileEdges)
		spec.CellEdgeKinds = make([]EdgeKind, len(spec.CellVerts))
		for c := 0; c < len(faces); c++ {
			lo, hi := spec.CellStart[c], spec.CellStart[c+1]
			for h := lo; h < hi; h++ {
				a, b := spec.CellVerts[h], spec.CellVerts[lo+(h-lo+1)%(hi-lo)]
				e := inc.find(fileEdges, a, b)
				if e < 0 {
					return nil, fileErr(path, kindName, nil, "face %d side %d–%d is not among the listed edges", c, a, b)
				}
				spec.CellEdgeKinds[h] = EdgeKind(k[e])
			}
		}
	}
	m, err := Build(spec)
	if err != nil {
		return nil, fileErr(path, fnName, err, "the faces do not form a valid mesh")
	}
	if fileEdges != nil {
		if err := m.followEdges(fileEdges); err != nil {
			return nil, fileErr(path, "", err, "edge_node_connectivity does not match the faces")
		}
	}
	if fp, err := f.AttrText(topo, "colbridge_fingerprint"); err == nil && fp != m.Fingerprint() {
		return nil, fileErr(path, topo, nil, "stored fingerprint %s differs from the mesh's %s: the file was altered after it was written", fp, m.Fingerprint())
	}
	return m, nil
}

// signedArea returns the signed area of a face of the spec (orientation test).
func signedArea(s MeshSpec, face []int32) float64 {
	if s.Surface == Sphere {
		a := 0.0
		p0 := s.Verts[face[0]]
		for k := 1; k+1 < len(face); k++ {
			a += sphere.TriangleArea(p0, s.Verts[face[k]], s.Verts[face[k+1]])
		}
		return a
	}
	ref := s.Verts[face[0]]
	m := &Mesh{Surface: Plane, Lx: s.Lx, Ly: s.Ly, PeriodicX: s.PeriodicX, PeriodicY: s.PeriodicY}
	a := 0.0
	for k := 1; k+1 < len(face); k++ {
		p := m.Unwrap(s.Verts[face[k]], ref)
		q := m.Unwrap(s.Verts[face[k+1]], ref)
		a += (p.X-ref.X)*(q.Y-ref.Y) - (q.X-ref.X)*(p.Y-ref.Y)
	}
	return a
}

// readFloats1D reads a whole 1-D variable as float64s.
func readFloats1D(f *ncio.File, path, name string) ([]float64, error) {
	v, err := f.Var(name)
	if err != nil {
		return nil, fileErr(path, name, err, "missing")
	}
	if len(v.Shape) != 1 {
		return nil, fileErr(path, name, nil, "has %d dimensions, want 1", len(v.Shape))
	}
	if v.Shape[0] > maxMeshSize {
		return nil, fileErr(path, name, nil, "has %d values, more than this reader accepts", v.Shape[0])
	}
	out := make([]float64, v.Shape[0])
	if err := f.ReadFloat64s(name, nil, nil, out); err != nil {
		return nil, err
	}
	return out, nil
}

// readConnectivity reads a UGRID connectivity variable into per-element index lists,
// honouring start_index, _FillValue and either dimension order (the element dimension is
// elemDim when the topology names it, else the first).
func readConnectivity(f *ncio.File, path, name, elemDim string, nRef int) ([][]int32, error) {
	v, err := f.Var(name)
	if err != nil {
		return nil, fileErr(path, name, err, "missing")
	}
	if len(v.Shape) != 2 {
		return nil, fileErr(path, name, nil, "has %d dimensions, want 2", len(v.Shape))
	}
	n, k := v.Shape[0], v.Shape[1]
	transposed := elemDim != "" && v.Dims[1] == elemDim && v.Dims[0] != elemDim
	if transposed {
		n, k = k, n
	}
	if n*k > maxMeshSize || n < 0 || k < 0 {
		return nil, fileErr(path, name, nil, "is too large (%d × %d)", n, k)
	}
	buf := make([]int64, n*k)
	if err := f.ReadInt64s(name, nil, nil, buf); err != nil {
		return nil, err
	}
	start := int64(0)
	if s, err := f.AttrInt64s(name, "start_index"); err == nil && len(s) == 1 {
		start = s[0]
	}
	fill, hasFill, _ := f.FillValue(name)
	out := make([][]int32, n)
	for i := 0; i < n; i++ {
		row := make([]int32, 0, k)
		for j := 0; j < k; j++ {
			x := buf[i*k+j]
			if transposed {
				x = buf[j*n+i]
			}
			if (hasFill && float64(x) == fill) || x < 0 && !hasFill {
				continue
			}
			idx := x - start
			if idx < 0 || idx >= int64(nRef) {
				return nil, fileErr(path, name, nil, "element %d refers to %d, outside [%d, %d)", i, x, start, int64(nRef)+start)
			}
			row = append(row, int32(idx))
		}
		out[i] = row
	}
	return out, nil
}

// followEdges renumbers the mesh's edges to the order of fileEdges (pairs of vertices) and
// takes the file's orientation for interior edges (boundary edges keep the cell on their
// left). It fails when the lists do not describe the same edges.
func (m *Mesh) followEdges(fileEdges [][2]int32) error {
	ne := m.NumEdges()
	if len(fileEdges) != ne {
		return fmt.Errorf("the file lists %d edges, the faces have %d", len(fileEdges), ne)
	}
	if slices.Equal(fileEdges, m.EdgeVerts) {
		return nil // already in the file's order (every file colbridge writes)
	}
	inc := incidence(m.NumVerts(), m.EdgeVerts)
	newOf := make([]int32, ne) // old edge → new index
	for i := range newOf {
		newOf[i] = -1
	}
	for i, p := range fileEdges {
		if p[0] < 0 || p[1] < 0 || int(p[0]) >= m.NumVerts() || int(p[1]) >= m.NumVerts() {
			return fmt.Errorf("edge %d (%d–%d) refers to a missing node", i, p[0], p[1])
		}
		old := inc.find(m.EdgeVerts, p[0], p[1])
		if old < 0 {
			return fmt.Errorf("edge %d (%d–%d) is not a side of any face", i, p[0], p[1])
		}
		if newOf[old] >= 0 {
			return fmt.Errorf("edge %d (%d–%d) is listed twice", i, p[0], p[1])
		}
		newOf[old] = int32(i)
	}
	ev := make([][2]int32, ne)
	ec := make([][2]int32, ne)
	el := make([]float64, ne)
	em := make([]r3.Vec, ne)
	en := make([]r3.Vec, ne)
	var ek []EdgeKind
	if m.EdgeKinds != nil {
		ek = make([]EdgeKind, ne)
	}
	for old := 0; old < ne; old++ {
		i := newOf[old]
		ev[i], ec[i], el[i], em[i], en[i] = m.EdgeVerts[old], m.EdgeCells[old], m.EdgeLength[old], m.EdgeMid[old], m.EdgeNormal[old]
		if ek != nil {
			ek[i] = m.EdgeKinds[old]
		}
		want := fileEdges[i]
		if ev[i] != want && ec[i][1] >= 0 {
			ev[i] = want
			ec[i] = [2]int32{ec[i][1], ec[i][0]}
			en[i] = r3.Scale(-1, en[i])
		}
	}
	for h, e := range m.CellEdges {
		m.CellEdges[h] = newOf[e]
	}
	m.EdgeVerts, m.EdgeCells, m.EdgeLength, m.EdgeMid, m.EdgeNormal, m.EdgeKinds = ev, ec, el, em, en, ek
	return nil
}

// ReadCellMask reads a variable on the faces of the mesh in path (one value per cell of
// m) and returns true where it is non-zero and not missing: the cells that take part.
func ReadCellMask(path, name string, m *Mesh) ([]bool, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	v, err := f.Var(name)
	if err != nil {
		return nil, fileErr(path, name, err, "mask variable not found")
	}
	n := 1
	for _, s := range v.Shape {
		n *= s
	}
	if n != m.NumCells() {
		return nil, fileErr(path, name, nil, "mask has %d values for %d cells", n, m.NumCells())
	}
	buf := make([]float64, n)
	if err := f.ReadFloat64s(name, nil, nil, buf); err != nil {
		return nil, err
	}
	fill, hasFill, _ := f.FillValue(name)
	mask := make([]bool, n)
	for i, x := range buf {
		mask[i] = x != 0 && !math.IsNaN(x) && !(hasFill && x == fill)
	}
	return mask, nil
}

var errNoLatLon = errors.New("no mesh topology and no latitude–longitude coordinates")

// edgeIncidence lists the edges at each vertex (CSR), to find an edge by its end points
// without a hash map (meshes have millions of edges).
type edgeIncidence struct{ start, edges []int32 }

func incidence(nv int, edges [][2]int32) edgeIncidence {
	inc := edgeIncidence{start: make([]int32, nv+1), edges: make([]int32, 2*len(edges))}
	for _, e := range edges {
		inc.start[e[0]+1]++
		inc.start[e[1]+1]++
	}
	for v := 0; v < nv; v++ {
		inc.start[v+1] += inc.start[v]
	}
	fill := append([]int32(nil), inc.start[:nv]...)
	for i, e := range edges {
		for _, v := range e {
			inc.edges[fill[v]] = int32(i)
			fill[v]++
		}
	}
	return inc
}

// find returns the edge joining a and b, or −1.
func (inc edgeIncidence) find(edges [][2]int32, a, b int32) int {
	for _, e := range inc.edges[inc.start[a]:inc.start[a+1]] {
		p := edges[e]
		if (p[0] == a && p[1] == b) || (p[0] == b && p[1] == a) {
			return int(e)
		}
	}
	return -1
}
