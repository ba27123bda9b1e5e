// Package remap builds the maps of a dynamics–physics coupling: horizontal maps between any
// two meshes on the same surface, the staggered maps from edges and vertices to columns and
// back, vertical maps between level sets, coupling plans and bundles, and the application
// of maps to fields.
//
// # The supermesh
//
// ComputeOverlaps intersects every source cell with every target cell it meets. On the
// sphere a cell is the intersection of half-spaces {x : m·x ≥ d} bounded by great circles
// (d = 0) and, for latitude–longitude cells, parallels (m = ±z); the source cell is
// clipped against the target cell's half-spaces by Sutherland–Hodgman in 3-D, so there is
// no longitude or latitude arithmetic and the poles and the date line are ordinary cases.
// Where a small circle is involved an edge may cross a plane twice; both crossings are
// found. Great-circle planes are applied before parallels, so a polar cap never lies
// wholly inside the remaining polygon. Non-convex target cells are split into triangles
// first. On the plane the same is done with lines, with periodic wrap.
//
// Consistency is what conservation needs: every half-plane is computed once per mesh edge
// and negated for the edge's second cell, every supermesh vertex is computed from mesh
// data only (a crossing of two mesh edges from the original end points; a vertex of a
// clipping cell is that mesh vertex), so neighbouring pieces share bit-identical vertices
// and nothing is counted twice or lost. For full coverage the pieces of every cell sum to
// its area within ≤ 5e-14 relative on the test meshes (the issue asks 1e-12). Pieces
// smaller than SliverShare of their cells are rounding artefacts of shared edges and are
// dropped.
//
// Areas are exact for the polygons: signed geodesic triangles on vertex differences plus
// the exact segment between each parallel and its chord (grids/sphere). Candidates come
// from an advancing front: the target cell holding the source centroid is found by a walk
// across edges, then edge neighbours of every overlapping target are visited, so the cost
// is proportional to the number of pieces. A k-d tree takes over for regional meshes.
//
// # Horizontal methods (Build)
//
//   - Conservative, order 1: W_ts = |s ∩ t| / |t| (Jones 1999).
//   - Conservative, order 2: a least-squares gradient per source cell integrated over the
//     pieces with their first moments, in 3-D (see buildConservative).
//   - Conservative, orders 3 and 4: polynomial reconstructions on a patch, integrated over
//     the pieces by quadrature (Ullrich & Taylor 2015 give the theory of such maps).
//   - Interpolate, order 1: barycentric, mean-value and bilinear weights at the column
//     points.
//   - Nearest.
//
// Every map carries the measures and coverage of both sides. Partly covered targets are
// divided by their covered part (ByCovered: constants kept) or by their whole area
// (ByWhole: the covered integral kept); uncovered targets keep empty rows and coverage 0,
// so an apply step writes the fill value there, never a silent zero. Maps are built in
// parallel and do not depend on the number of workers.
//
// # Staggered and vertical maps, plans
//
// CellVectorFromEdges, ColumnWinds, AveragedEdgeNormal, CellFromVertices, BuildFESpace and
// Adjoint build the staggered maps (see their documentation for inner products and
// measured accuracy); NewVerticalMap the vertical ones (see VerticalMethod). ReadPlan and
// BuildBundle turn a coupling plan into a bundle directory.
//
// References:
//   - Jones, P. W. (1999), First- and second-order conservative remapping schemes for grids
//     in spherical coordinates, Mon. Wea. Rev. 127:2204–2210.
//   - Ullrich, P. A. & Taylor, M. A. (2015), Arbitrary-order conservative and consistent
//     remapping and a theory of linear maps, Mon. Wea. Rev. 143:2419–2440.
//   - Perot, J. B. (2000), Conservation properties of unstructured staggered mesh schemes,
//     J. Comput. Phys. 159:58–89.
//   - Colella, P. & Woodward, P. R. (1984), The piecewise parabolic method (PPM) for
//     gas-dynamical simulations, J. Comput. Phys. 54:174–201.
package remap
