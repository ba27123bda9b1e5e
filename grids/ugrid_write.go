package grids

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids/sphere"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/internal/version"
)

// Names of the UGRID variables colbridge writes. The topology variable follows the UGRID
// conventions (cf_role = "mesh_topology"); node, edge and face variables hang off it by
// the attributes the conventions define, so other UGRID readers find them.
const (
	ugTopology  = "mesh"
	ugNodeX     = "mesh_node_x"
	ugNodeY     = "mesh_node_y"
	ugNodeXYZ   = "mesh_node_xyz"
	ugFaceNodes = "mesh_face_nodes"
	ugEdgeNodes = "mesh_edge_nodes"
	ugFaceEdges = "mesh_face_edges"
	ugEdgeFaces = "mesh_edge_faces"
	ugEdgeKind  = "mesh_edge_kind"
	ugFaceX     = "mesh_face_x"
	ugFaceY     = "mesh_face_y"
	ugFaceXBnds = "mesh_face_x_bnds"
	ugFaceYBnds = "mesh_face_y_bnds"
	ugFaceArea  = "mesh_face_area"
	ugEdgeX     = "mesh_edge_x"
	ugEdgeY     = "mesh_edge_y"

	dimNode    = "nmesh_node"
	dimEdge    = "nmesh_edge"
	dimFace    = "nmesh_face"
	dimMaxNode = "nmesh_face_max_nodes"
	dimTwo     = "two"
	dimThree   = "three"
)

// WriteUGRID writes m to path as a NetCDF-4 file following the UGRID conventions: node
// coordinates (longitude/latitude in degrees on the sphere, x/y in metres on the plane),
// face–node, edge–node, face–edge and edge–face connectivity (0-based, _FillValue −1),
// face centres with bounds, face areas, edge midpoints. colbridge adds the exact node unit
// vectors (mesh_node_xyz), the edge kinds (mesh_edge_kind, when any edge follows a
// parallel), the surface, radius and periods, and the fingerprint as attributes of the
// topology variable, so ReadMesh gives back the same mesh bit for bit. The file appears
// under its name only when complete.
func WriteUGRID(path string, m *Mesh) error {
	w, err := ncio.Create(path, ncio.CreateOptions{Format: ncio.NetCDF4})
	if err != nil {
		return err
	}
	if err := writeUGRID(w, m); err != nil {
		w.Abort()
		return err
	}
	return w.Commit()
}

func writeUGRID(w *ncio.Writer, m *Mesh) error {
	nv, ne, nc, md := m.NumVerts(), m.NumEdges(), m.NumCells(), m.MaxDegree()
	sph := m.Surface == Sphere
	for _, d := range []struct {
		name string
		n    int
	}{{dimNode, nv}, {dimEdge, ne}, {dimFace, nc}, {dimMaxNode, md}, {dimTwo, 2}, {dimThree, 3}} {
		if err := w.DefDim(d.name, d.n); err != nil {
			return err
		}
	}
	type vdef struct {
		name  string
		t     ncio.Type
		dims  []string
		attrs [][2]string
	}
	xName, yName, xUnits, yUnits := "longitude", "latitude", "degrees_east", "degrees_north"
	if !sph {
		xName, yName, xUnits, yUnits = "projection_x_coordinate", "projection_y_coordinate", "m", "m"
	}
	defs := []vdef{
		{ugTopology, ncio.Int32, nil, [][2]string{
			{"cf_role", "mesh_topology"},
			{"long_name", "topology of the 2-D mesh: " + m.Name},
			{"node_coordinates", ugNodeX + " " + ugNodeY},
			{"face_node_connectivity", ugFaceNodes},
			{"edge_node_connectivity", ugEdgeNodes},
			{"face_edge_connectivity", ugFaceEdges},
			{"edge_face_connectivity", ugEdgeFaces},
			{"face_coordinates", ugFaceX + " " + ugFaceY},
			{"edge_coordinates", ugEdgeX + " " + ugEdgeY},
			{"face_dimension", dimFace},
			{"edge_dimension", dimEdge},
			{"colbridge_surface", m.Surface.String()},
			{"colbridge_name", m.Name},
			{"colbridge_fingerprint", m.Fingerprint()},
		}},
		{ugNodeX, ncio.Float64, []string{dimNode}, [][2]string{{"standard_name", xName}, {"units", xUnits}, {"long_name", "x of mesh nodes"}}},
		{ugNodeY, ncio.Float64, []string{dimNode}, [][2]string{{"standard_name", yName}, {"units", yUnits}, {"long_name", "y of mesh nodes"}}},
		{ugFaceNodes, ncio.Int32, []string{dimFace, dimMaxNode}, [][2]string{{"cf_role", "face_node_connectivity"}, {"long_name", "nodes of each face, counter-clockwise"}}},
		{ugEdgeNodes, ncio.Int32, []string{dimEdge, dimTwo}, [][2]string{{"cf_role", "edge_node_connectivity"}, {"long_name", "nodes of each edge; the edge normal points to the right of first→second"}}},
		{ugFaceEdges, ncio.Int32, []string{dimFace, dimMaxNode}, [][2]string{{"cf_role", "face_edge_connectivity"}, {"long_name", "edges of each face; edge k joins nodes k and k+1"}}},
		{ugEdgeFaces, ncio.Int32, []string{dimEdge, dimTwo}, [][2]string{{"cf_role", "edge_face_connectivity"}, {"long_name", "faces left and right of each edge"}}},
		{ugFaceX, ncio.Float64, []string{dimFace}, [][2]string{{"standard_name", xName}, {"units", xUnits}, {"long_name", "x of face centroids"}, {"bounds", ugFaceXBnds}}},
		{ugFaceY, ncio.Float64, []string{dimFace}, [][2]string{{"standard_name", yName}, {"units", yUnits}, {"long_name", "y of face centroids"}, {"bounds", ugFaceYBnds}}},
		{ugFaceXBnds, ncio.Float64, []string{dimFace, dimMaxNode}, nil},
		{ugFaceYBnds, ncio.Float64, []string{dimFace, dimMaxNode}, nil},
		{ugFaceArea, ncio.Float64, []string{dimFace}, [][2]string{{"standard_name", "cell_area"}, {"units", "m2"}, {"mesh", ugTopology}, {"location", "face"}}},
		{ugEdgeX, ncio.Float64, []string{dimEdge}, [][2]string{{"standard_name", xName}, {"units", xUnits}, {"long_name", "x of edge midpoints"}}},
		{ugEdgeY, ncio.Float64, []string{dimEdge}, [][2]string{{"standard_name", yName}, {"units", yUnits}, {"long_name", "y of edge midpoints"}}},
	}
	if sph {
		defs[0].attrs = append(defs[0].attrs, [2]string{"colbridge_node_xyz", ugNodeXYZ})
		defs = append(defs, vdef{ugNodeXYZ, ncio.Float64, []string{dimNode, dimThree}, [][2]string{{"long_name", "mesh nodes as exact unit vectors (x, y, z); read in preference to longitude and latitude"}}})
	}
	if m.EdgeKinds != nil {
		defs[0].attrs = append(defs[0].attrs, [2]string{"colbridge_edge_kind", ugEdgeKind})
		defs = append(defs, vdef{ugEdgeKind, ncio.Int8, []string{dimEdge}, [][2]string{{"long_name", "curve each edge follows"}, {"flag_meanings", "great_arc parallel_of_latitude"}}})
	}
	for _, d := range defs {
		if err := w.DefVar(d.name, d.t, d.dims); err != nil {
			return err
		}
		for _, a := range d.attrs {
			if err := w.PutAttrText(d.name, a[0], a[1]); err != nil {
				return err
			}
		}
	}
	for _, v := range []string{ugFaceNodes, ugFaceEdges, ugEdgeFaces} {
		if err := w.PutAttrInt32s(v, "_FillValue", -1); err != nil {
			return err
		}
	}
	for _, v := range []string{ugFaceXBnds, ugFaceYBnds} {
		if err := w.PutAttrFloat64s(v, "_FillValue", math.NaN()); err != nil {
			return err
		}
	}
	for _, v := range []string{ugFaceNodes, ugEdgeNodes, ugFaceEdges, ugEdgeFaces} {
		if err := w.PutAttrInt32s(v, "start_index", 0); err != nil {
			return err
		}
	}
	if err := w.PutAttrInt32s(ugTopology, "topology_dimension", 2); err != nil {
		return err
	}
	if m.EdgeKinds != nil {
		if err := w.PutAttrInt32s(ugEdgeKind, "flag_values", 0, 1); err != nil {
			return err
		}
	}
	if sph {
		if err := w.PutAttrFloat64s(ugTopology, "colbridge_radius", m.Radius); err != nil {
			return err
		}
	} else {
		if err := w.PutAttrFloat64s(ugTopology, "colbridge_lengths", m.Lx, m.Ly); err != nil {
			return err
		}
		per := []int32{0, 0}
		if m.PeriodicX {
			per[0] = 1
		}
		if m.PeriodicY {
			per[1] = 1
		}
		if err := w.PutAttrInt32s(ugTopology, "colbridge_periodic", per...); err != nil {
			return err
		}
	}
	for _, g := range [][2]string{
		{"Conventions", "CF-1.11 UGRID-1.0"},
		{"title", m.Name},
		{"source", "colbridge " + versionString()},
	} {
		if err := w.PutAttrText("", g[0], g[1]); err != nil {
			return err
		}
	}
	if err := w.EndDef(); err != nil {
		return err
	}

	// Data.
	nx := make([]float64, nv)
	ny := make([]float64, nv)
	for i, p := range m.Verts {
		nx[i], ny[i] = m.xy(p)
	}
	if err := w.WriteFloat64s(ugNodeX, nil, nil, nx); err != nil {
		return err
	}
	if err := w.WriteFloat64s(ugNodeY, nil, nil, ny); err != nil {
		return err
	}
	if sph {
		xyz := make([]float64, 3*nv)
		for i, p := range m.Verts {
			xyz[3*i], xyz[3*i+1], xyz[3*i+2] = p.X, p.Y, p.Z
		}
		if err := w.WriteFloat64s(ugNodeXYZ, nil, nil, xyz); err != nil {
			return err
		}
	}
	fn := make([]int32, nc*md)
	fe := make([]int32, nc*md)
	bx := make([]float64, nc*md)
	by := make([]float64, nc*md)
	for i := range fn {
		fn[i], fe[i], bx[i], by[i] = -1, -1, math.NaN(), math.NaN()
	}
	for c := 0; c < nc; c++ {
		for k, v := range m.CellVertices(c) {
			fn[c*md+k] = v
			fe[c*md+k] = m.CellEdges[int(m.CellStart[c])+k]
			bx[c*md+k], by[c*md+k] = m.xy(m.Verts[v])
		}
	}
	en := make([]int32, 2*ne)
	ef := make([]int32, 2*ne)
	ex := make([]float64, ne)
	ey := make([]float64, ne)
	for e := 0; e < ne; e++ {
		en[2*e], en[2*e+1] = m.EdgeVerts[e][0], m.EdgeVerts[e][1]
		ef[2*e], ef[2*e+1] = m.EdgeCells[e][0], m.EdgeCells[e][1]
		ex[e], ey[e] = m.xy(m.EdgeMid[e])
	}
	fx := make([]float64, nc)
	fy := make([]float64, nc)
	for c := 0; c < nc; c++ {
		fx[c], fy[c] = m.xy(m.CellCentroid[c])
	}
	for _, iv := range []struct {
		name string
		data []int32
	}{{ugFaceNodes, fn}, {ugFaceEdges, fe}, {ugEdgeNodes, en}, {ugEdgeFaces, ef}} {
		if err := w.WriteInt32s(iv.name, nil, nil, iv.data); err != nil {
			return err
		}
	}
	for _, fv := range []struct {
		name string
		data []float64
	}{{ugFaceXBnds, bx}, {ugFaceYBnds, by}, {ugFaceX, fx}, {ugFaceY, fy}, {ugFaceArea, m.CellArea}, {ugEdgeX, ex}, {ugEdgeY, ey}} {
		if err := w.WriteFloat64s(fv.name, nil, nil, fv.data); err != nil {
			return err
		}
	}
	if m.EdgeKinds != nil {
		k := make([]int32, ne)
		for e, v := range m.EdgeKinds {
			k[e] = int32(v)
		}
		if err := w.WriteInt32s(ugEdgeKind, nil, nil, k); err != nil {
			return err
		}
	}
	return nil
}

// xy returns the file coordinates of a point: longitude and latitude in degrees on the
// sphere (longitude in (−180, 180]), x and y on the plane.
func (m *Mesh) xy(p r3.Vec) (float64, float64) {
	if m.Surface == Sphere {
		lon, lat := sphere.LonLat(p)
		return lon * 180 / math.Pi, lat * 180 / math.Pi
	}
	return p.X, p.Y
}

func versionString() string { return version.Version }
