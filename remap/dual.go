package remap

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
)

// dualKind is how values are interpolated inside the centroid dual polygon of a vertex.
type dualKind uint8

const (
	// dualNone: a vertex on the boundary of a regional mesh (its cells do not close
	// around it) or with fewer than three cells; it has no dual polygon.
	dualNone dualKind = iota
	// dualPolygon: barycentric coordinates (triangles) or mean value coordinates.
	dualPolygon
	// dualLonLat: a longitude–latitude rectangle of four lat–lon cells; bilinear.
	dualLonLat
	// dualPolar: the ring of lat–lon cells around a pole; see polarWeights.
	dualPolar
)

// centroidDual is the centroid dual of a mesh: around every interior vertex v, the
// polygon whose corners are the centroids of the cells around v, counter-clockwise (the
// order of grids.Mesh.VertexCells). On the sphere its sides are great arcs; lon–lat
// rectangles and polar rings of latitude–longitude meshes have sides along meridians and
// parallels instead. The dual polygons of a mesh tile the region inside its outer ring of
// centroids: the whole surface for global and periodic meshes.
type centroidDual struct {
	m      *grids.Mesh
	sphere bool
	kind   []dualKind
	// rot[v], for dualLonLat, is the position in VertexCells(v) of the south-west corner;
	// the others follow counter-clockwise: south-east, north-east, north-west.
	rot []uint8
	// lat is the latitude of every cell centroid (lat–lon meshes only, else nil).
	lat []float64
}

// lonLatShare is how far, as a share of the rectangle's sides, two centroids may differ in
// latitude or longitude and still count as lying on the same parallel or meridian: the
// centroids of one row of a lat–lon grid agree to rounding (≈1e-16), so this only
// separates real rectangles from other quadrilaterals.
const lonLatShare = 1e-9

// poleShare: a vertex this close to the z axis (in unit-sphere length) is a pole, so a
// grid read from a file whose pole is (1e-17, 0, 1) still gets the polar scheme.
const poleShare = 1e-12

func newCentroidDual(m *grids.Mesh) *centroidDual {
	d := &centroidDual{m: m, sphere: m.Surface == grids.Sphere}
	nv, nc := m.NumVerts(), m.NumCells()
	d.kind = make([]dualKind, nv)
	boundary := make([]bool, nv)
	for e, ec := range m.EdgeCells {
		if ec[1] < 0 {
			boundary[m.EdgeVerts[e][0]] = true
			boundary[m.EdgeVerts[e][1]] = true
		}
	}
	var llCell []bool
	if d.sphere && m.EdgeKinds != nil {
		llCell = make([]bool, nc)
		d.lat = make([]float64, nc)
		for c := 0; c < nc; c++ {
			llCell[c] = latLonCell(m, c)
			g := m.CellCentroid[c]
			d.lat[c] = math.Atan2(g.Z, math.Hypot(g.X, g.Y))
		}
		d.rot = make([]uint8, nv)
	}
	for v := 0; v < nv; v++ {
		cells := m.VertexCells(v)
		if boundary[v] || len(cells) < 3 {
			continue
		}
		d.kind[v] = dualPolygon
		if llCell == nil {
			continue
		}
		all := true
		for _, c := range cells {
			all = all && llCell[c]
		}
		if !all {
			continue
		}
		p := m.Verts[v]
		switch {
		case math.Hypot(p.X, p.Y) <= poleShare:
			if d.isPolarRing(cells) {
				d.kind[v] = dualPolar
			}
		case len(cells) == 4:
			if k, ok := d.lonLatRect(cells); ok {
				d.kind[v], d.rot[v] = dualLonLat, uint8(k)
			}
		}
	}
	return d
}

// latLonCell reports whether cell c is bounded by parallels and meridians only, with at
// least one parallel: a cell of a latitude–longitude grid (pole cells included).
func latLonCell(m *grids.Mesh, c int) bool {
	vs := m.CellVertices(c)
	es := m.CellEdgeList(c)
	parallel := false
	for k, e := range es {
		if m.Kind(int(e)) == grids.Parallel {
			parallel = true
			continue
		}
		a, b := m.Verts[vs[k]], m.Verts[vs[(k+1)%len(vs)]]
		ha, hb := math.Hypot(a.X, a.Y), math.Hypot(b.X, b.Y)
		if ha <= poleShare || hb <= poleShare {
			continue // an arc from a pole is a meridian
		}
		// Same longitude: the horizontal parts are parallel and point the same way.
		if math.Abs(a.X*b.Y-a.Y*b.X) > 1e-12*ha*hb || a.X*b.X+a.Y*b.Y <= 0 {
			return false
		}
	}
	return parallel
}

// relLon returns the longitude of q east of the meridian of a, in (−π, π], from the
// horizontal components only: no absolute longitudes, so the date line is ordinary.
func relLon(a, q r3.Vec) float64 {
	return math.Atan2(a.X*q.Y-a.Y*q.X, a.X*q.X+a.Y*q.Y)
}

// lonLatRect returns the position of the south-west corner when the four centroids around
// a vertex form a longitude–latitude rectangle.
func (d *centroidDual) lonLatRect(cells []int32) (int, bool) {
	g := d.m.CellCentroid
	k := 0
	best := math.Inf(1)
	for i := 0; i < 4; i++ {
		if s := d.lat[cells[i]] + d.lat[cells[(i+1)%4]]; s < best {
			best, k = s, i
		}
	}
	sw, se, ne, nw := cells[k], cells[(k+1)%4], cells[(k+2)%4], cells[(k+3)%4]
	dLat := d.lat[nw] - d.lat[sw]
	dLon := relLon(g[sw], g[se])
	tolLat, tolLon := lonLatShare*math.Abs(dLat), lonLatShare*math.Abs(dLon)
	ok := dLat > 0 && dLon > 0 &&
		math.Abs(d.lat[se]-d.lat[sw]) <= tolLat && math.Abs(d.lat[ne]-d.lat[nw]) <= tolLat &&
		math.Abs(relLon(g[sw], g[nw])) <= tolLon && math.Abs(relLon(g[se], g[ne])) <= tolLon
	return k, ok
}

// isPolarRing reports whether the centroids around a pole share one latitude.
func (d *centroidDual) isPolarRing(cells []int32) bool {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range cells {
		lo, hi = math.Min(lo, d.lat[c]), math.Max(hi, d.lat[c])
	}
	colat := math.Pi/2 - math.Abs(lo)
	return hi-lo <= lonLatShare*colat && lo*hi > 0
}

// dualFrame is the local frame at a point p in which dual polygons are evaluated: the
// gnomonic projection about p on the sphere (great arcs map to straight lines, p to the
// origin), the minimum-image offset from p on the plane. All candidate polygons at one
// point share it, so a side shared by two polygons has bit-identical end points in both.
type dualFrame struct {
	p, e1, e2 r3.Vec
}

func (d *centroidDual) frame(p r3.Vec) dualFrame {
	if !d.sphere {
		return dualFrame{p: p}
	}
	e1 := r3.Unit(r3.Cross(p, anyPerp(p)))
	return dualFrame{p: p, e1: e1, e2: r3.Cross(p, e1)}
}

// project returns the frame coordinates of point x; ok is false when x is on the far
// hemisphere from p (no dual polygon through it can contain p).
func (d *centroidDual) project(f *dualFrame, x r3.Vec) ([2]float64, bool) {
	if !d.sphere {
		x = d.m.Unwrap(x, f.p)
		return [2]float64{x.X - f.p.X, x.Y - f.p.Y}, true
	}
	h := r3.Dot(x, f.p)
	if !(h > 0.01) {
		return [2]float64{}, false
	}
	return [2]float64{r3.Dot(x, f.e1) / h, r3.Dot(x, f.e2) / h}, true
}

// weigh appends to cols and w the cells of the dual polygon of vertex v and their weights
// at the frame's point, and returns how far the point lies outside the polygon as a share
// of its size (0 inside). ok is false when the polygon cannot be evaluated there.
func (d *centroidDual) weigh(f *dualFrame, v int, cols []int32, w []float64, q [][2]float64) ([]int32, []float64, [][2]float64, float64, bool) {
	cells := d.m.VertexCells(v)
	switch d.kind[v] {
	case dualLonLat:
		k := int(d.rot[v])
		sw, se, ne, nw := cells[k], cells[(k+1)%4], cells[(k+2)%4], cells[(k+3)%4]
		s, t, out := d.bilinearST(f.p, sw, se, nw)
		cols = append(cols, sw, se, ne, nw)
		w = append(w, (1-s)*(1-t), s*(1-t), s*t, (1-s)*t)
		return cols, w, q, out, true
	case dualPolar:
		cols, w, out := d.polarWeights(f.p, v, cells, cols, w)
		return cols, w, q, out, true
	case dualPolygon:
		q = q[:0]
		for _, c := range cells {
			x, ok := d.project(f, d.m.CellCentroid[c])
			if !ok {
				return cols, w, q, 0, false
			}
			q = append(q, x)
		}
		n := len(w)
		cols = append(cols, cells...)
		for range cells {
			w = append(w, 0)
		}
		out := polygonWeights(q, w[n:])
		return cols, w, q, out, true
	}
	return cols, w, q, 0, false
}

// bilinearST returns the bilinear coordinates of p in the lon–lat rectangle with corners
// sw, se (south side) and nw (north-west): s from the longitude east of sw's meridian as a
// share of the rectangle's width, t from the latitude. They are clamped to [0, 1]; out is
// how far outside they were.
func (d *centroidDual) bilinearST(p r3.Vec, sw, se, nw int32) (s, t, out float64) {
	g := d.m.CellCentroid
	s = relLon(g[sw], p) / relLon(g[sw], g[se])
	lat := math.Atan2(p.Z, math.Hypot(p.X, p.Y))
	t = (lat - d.lat[sw]) / (d.lat[nw] - d.lat[sw])
	out = math.Max(0, math.Max(math.Max(-s, s-1), math.Max(-t, t-1)))
	return math.Max(0, math.Min(1, s)), math.Max(0, math.Min(1, t)), out
}

// polarWeights interpolates in the cap around a pole of a lat–lon mesh, bounded by the
// parallel of the ring of n centroids around the pole (the same parallel that bounds the
// neighbouring lon–lat rectangles, so the two kinds tile without gap). It is bilinear in
// longitude and colatitude with the pole as a degenerate side: with ρ = colatitude of p
// over that of the ring, and p between ring centroids i and i+1 at longitude share s,
//
//	f(p) = (1 − ρ)·(mean of the ring) + ρ·((1 − s) f_i + s f_{i+1}).
//
// On the ring (ρ = 1) this is the linear interpolation in longitude that the rectangles
// have on the same parallel, so the interpolant is continuous; at the pole it is the ring
// mean, single-valued; weights are non-negative and sum to 1.
func (d *centroidDual) polarWeights(p r3.Vec, v int, cells []int32, cols []int32, w []float64) ([]int32, []float64, float64) {
	g := d.m.CellCentroid
	up := math.Copysign(1, d.m.Verts[v].Z) // +1 north, −1 south
	n := len(cells)
	// Counter-clockwise about the outward pole direction: longitude increases at the
	// north pole and decreases at the south pole.
	i := 0
	for k := 0; k < n; k++ {
		a, b := g[cells[k]], g[cells[(k+1)%n]]
		if up*(a.X*p.Y-a.Y*p.X) >= 0 && up*(p.X*b.Y-p.Y*b.X) >= 0 {
			i = k
			break
		}
	}
	j := (i + 1) % n
	a, b := g[cells[i]], g[cells[j]]
	s := relLon(a, p) / relLon(a, b)
	s = math.Max(0, math.Min(1, s))
	// The ring's parallel: the latitude of the western centroid of the sector, the
	// same value the rectangle on the other side uses for that side.
	west := cells[i]
	if up < 0 {
		west = cells[j]
	}
	colatRing := math.Pi/2 - up*d.lat[west]
	colat := math.Pi/2 - up*math.Atan2(p.Z, math.Hypot(p.X, p.Y))
	rho := colat / colatRing
	out := math.Max(0, rho-1)
	rho = math.Min(1, rho)
	base := len(w)
	for _, c := range cells {
		cols = append(cols, c)
		w = append(w, (1-rho)/float64(n))
	}
	w[base+i] += rho * (1 - s)
	w[base+j] += rho * s
	return cols, w, out
}
