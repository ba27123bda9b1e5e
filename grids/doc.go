// Package grids holds the horizontal meshes, vertical levels and physics column sets that
// every colbridge map is built between.
//
// # Meshes
//
// A Mesh lives on one Surface: the sphere (vertices are unit vectors; lengths and areas are
// scaled by the mesh's Radius, 6.37122e6 m unless overridden) or the plane (vertices are
// (x, y, 0); optionally periodic in x and/or y with periods Lx and Ly). Cells are polygons of
// any degree whose vertices are listed counter-clockwise seen from outside the sphere (or
// from +z on the plane). Edges are shared by at most two cells and carry a fixed
// orientation: an edge runs from EdgeVerts[e][0] to EdgeVerts[e][1], EdgeCells[e][0] lies on
// its left and EdgeCells[e][1] on its right, and EdgeNormal[e] points from the left cell to
// the right one. Every edge is a great-circle arc (a straight segment on the plane) unless
// its EdgeKind is Parallel, a constant-latitude small circle, as the edges of latitude–
// longitude cells are.
//
// # Geometry and its accuracy
//
// Cell areas are exact for the polygon the mesh describes: on the sphere they are sums of
// signed spherical-triangle areas over a fan (Van Oosterom & Strackee 1983, evaluated on
// vertex differences so that a cell of angular size h keeps a relative error near 1e-16,
// not 1e-16/h), plus, for every Parallel edge, the exact area between the small circle and
// its great-circle chord. Centroids come from the exact first moment
// ∫ x dA = ½ ∮ x × dx of the cell (a vector inside the sphere; CellCentroid is its
// direction). Dual (vertex) areas use the barycentric dual: each cell gives each of its
// corners the kite bounded by the corner, the two adjacent edge midpoints and the cell
// centroid, so the dual areas sum to the cell areas to rounding.
//
// # Generators
//
// NewCubedSphere, NewIcosahedral (triangles and their hexagonal–pentagonal dual),
// NewLatLon, NewPlaneQuads, NewPlaneTriangles and NewLine build meshes deterministically:
// the same arguments give bit-identical meshes and the same Fingerprint.
//
// # Levels and columns
//
// Levels is a vertical grid of nlev+1 interfaces, in height or in a normalised coordinate.
// Columns pairs a footprint mesh with levels: the physics column set.
//
// # Files
//
// WriteUGRID and ReadMesh store meshes following the UGRID conventions (node, edge and face
// connectivity, node and face coordinates in degrees, face bounds), adding the exact unit
// vectors of the nodes, the edge kinds and the fingerprint so a mesh round-trips bit for
// bit. ReadMesh also reads UGRID files other tools write, and latitude–longitude grids
// described by CF coordinate bounds.
//
// References:
//   - Van Oosterom, A. & Strackee, J. (1983), The solid angle of a plane triangle,
//     IEEE Trans. Biomed. Eng. 30(2):125–126.
//   - Lauritzen, P. H. & Nair, R. D. (2008), Monotone and conservative cascade remapping
//     between spherical grids (CaRS), Mon. Wea. Rev. 136 (gnomonic cube cell areas).
package grids
